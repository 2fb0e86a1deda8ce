package triage.shell;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import org.jline.reader.impl.DefaultParser;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import picocli.CommandLine.Parameters;
import triage.core.provenance.ToolVersion;
import triage.core.sample.InputException;

/** {@code triage run}: replays a console script. */
@Command(name = "run", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Run a console script on an index: one console line per script line (blank lines and lines "
        + "starting with # are skipped), each echoed before it runs. Stops at the first failing line unless "
        + "--keep-going. With --json every line's text goes to stderr and stdout carries one JSON object: each "
        + "line with its exit code and its command's result object."},
    footer = ExitCodes.FOOTER)
public final class RunCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Keep going. */
  @Option(names = "--keep-going", description = "Run every line even after one fails (exit with the worst code).")
  boolean keepGoing;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout: every line run, its exit code "
      + "and its command's result (fields: docs/json.md).")
  boolean json;

  /** Script. */
  @Parameters(index = "0", paramLabel = "SCRIPT", description = "The script file.")
  Path script;

  @Override
  public Integer call() throws IOException {
    List<String> lines;
    if (Files.isDirectory(script)) {
      throw new InputException(script, "is a folder, not a script");
    }
    try {
      lines = Files.readAllLines(script);
    } catch (NoSuchFileException e) {
      throw new InputException(script, "script not found");
    } catch (java.nio.charset.CharacterCodingException e) {
      throw new InputException(script, "is not a text file (not UTF-8); expected one console command per line");
    }
    Session session = new Session(index);
    DefaultParser parser = new DefaultParser();
    var err = spec.commandLine().getErr();
    // With --json the lines' own text (echo, tables, a line's own --json object) goes to stderr, and stdout keeps
    // the one object of this run.
    var out = json ? err : spec.commandLine().getOut();
    List<Map<String, Object>> steps = new ArrayList<>();
    int worst = 0;
    for (int i = 0; i < lines.size(); i++) {
      String line = lines.get(i).strip();
      if (line.isEmpty() || line.startsWith("#")) {
        continue;
      }
      out.println("triage> " + line);
      out.flush();
      List<String> words;
      try {
        words = parser.parse(line, line.length()).words().stream().filter(w -> !w.isEmpty()).toList();
      } catch (org.jline.reader.EOFError e) {
        throw new InputException(script, i + 1, 0, "unbalanced quotes: " + e.getMessage(), null);
      }
      Object[] result = new Object[1];
      List<String> lineWords = words;
      int code = Output.capture(result, () -> session.execute(line, lineWords, out, err));
      if (code < 0) {
        break;
      }
      Map<String, Object> step = new LinkedHashMap<>();
      step.put("line", i + 1);
      step.put("text", line);
      step.put("exitCode", code);
      step.put("result", code == 0 ? result[0] : null);
      steps.add(step);
      if (code != 0) {
        err.println("triage: " + script + ":" + (i + 1) + ": this line failed (exit code " + code + ")");
        err.flush();
        worst = worse(worst, code);
        if (!keepGoing) {
          break;
        }
      }
    }
    Map<String, Object> result = new LinkedHashMap<>();
    result.put("command", "run");
    result.put("tool", "triage " + ToolVersion.get());
    result.put("index", index.toString());
    result.put("script", script.toString());
    result.put("exitCode", worst);
    result.put("steps", steps);
    new Output(spec, json).result(result);
    return worst;
  }

  /**
   * The worse of two exit codes: an internal error (1) outranks cancellation (130), invalid input (3) and a usage
   * error (2), in that order, whatever their numbers.
   */
  static int worse(int a, int b) {
    return rank(b) > rank(a) ? b : a;
  }

  private static int rank(int code) {
    return switch (code) {
      case 0 -> 0;
      case ExitCodes.USAGE -> 1;
      case ExitCodes.INPUT -> 2;
      case ExitCodes.CANCELLED -> 3;
      case ExitCodes.INTERNAL -> 4;
      default -> 5;
    };
  }
}
