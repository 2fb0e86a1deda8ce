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
      lines = new ArrayList<>(Files.readAllLines(script));
    } catch (NoSuchFileException e) {
      throw new InputException(script, "script not found");
    } catch (java.nio.charset.CharacterCodingException e) {
      throw new InputException(script, "is not a text file (not UTF-8); expected one console command per line");
    }
    if (!lines.isEmpty() && lines.get(0).startsWith("\uFEFF")) {
      // a byte-order mark, which some editors write first: not part of the first line's text
      lines.set(0, lines.get(0).substring(1));
    }
    // The index first, as the console does: a missing or damaged one is one message, not one per line.
    try (triage.index.EventStore store = triage.index.EventStore.open(index)) {
      store.manifest();
    }
    Session session = new Session(index);
    var err = spec.commandLine().getErr();
    // With --json the lines' own text (echo, tables, a line's own --json object) goes to stderr, and stdout keeps
    // the one object of this run.
    var out = json ? err : spec.commandLine().getOut();
    List<Map<String, Object>> steps = new ArrayList<>();
    int worst = 0;
    // Ctrl-C stops the running line after its current step; the run then ends with the lines run so far (and with
    // --json still prints its object). A second Ctrl-C ends the process at once.
    triage.core.Cancellation.clear();
    Object previous = org.jline.utils.Signals.register("INT", () -> {
      if (triage.core.Cancellation.requested()) {
        Runtime.getRuntime().halt(ExitCodes.CANCELLED);
      }
      triage.core.Cancellation.request();
      err.println();
      err.println("triage: stopping after the current step (Ctrl-C again to end at once) ...");
      err.flush();
    });
    try {
      for (int i = 0; i < lines.size(); i++) {
        String line = lines.get(i).strip();
        if (line.isEmpty() || line.startsWith("#")) {
          continue;
        }
        out.println("triage> " + line);
        out.flush();
        Object[] result = new Object[1];
        int code;
        boolean leave = false;
        try {
          List<String> words = Session.split(line);
          leave = !words.isEmpty() && (words.get(0).equals("quit") || words.get(0).equals("exit"));
          code = leave ? 0 : Output.capture(result, () -> session.execute(line, words, out, err));
        } catch (InputException e) {
          err.println("triage: " + e.getMessage());
          code = ExitCodes.INPUT;
        }
        if (code == 0 && triage.core.Cancellation.requested()) {
          // the line finished before it looked at the request (or between lines): stop here all the same
          code = ExitCodes.CANCELLED;
          result[0] = null;
        }
        Map<String, Object> step = new LinkedHashMap<>();
        step.put("line", i + 1);
        step.put("text", line);
        step.put("exitCode", code);
        step.put("result", code == 0 ? result[0] : null);
        steps.add(step);
        if (leave) {
          err.println("triage: " + script + ":" + (i + 1) + ": '" + line + "' ends the script here; "
              + remaining(lines, i) + " later line(s) not run");
          err.flush();
          break;
        }
        if (code != 0) {
          err.println("triage: " + script + ":" + (i + 1) + ": this line " + (code == ExitCodes.CANCELLED
              ? "was cancelled; later lines not run" : "failed (exit code " + code + ")"));
          err.flush();
          worst = worse(worst, code);
          if (!keepGoing || code == ExitCodes.CANCELLED) {
            break;
          }
        }
      }
    } finally {
      org.jline.utils.Signals.unregister("INT", previous);
      triage.core.Cancellation.clear();
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

  /** Lines after line i that are neither blank nor comments. */
  private static long remaining(List<String> lines, int i) {
    return lines.subList(i + 1, lines.size()).stream().map(String::strip)
        .filter(l -> !l.isEmpty() && !l.startsWith("#")).count();
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
