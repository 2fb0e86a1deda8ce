package triage.shell;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.TreeSet;
import java.util.concurrent.Callable;
import org.jline.reader.EndOfFileException;
import org.jline.reader.LineReader;
import org.jline.reader.LineReaderBuilder;
import org.jline.reader.UserInterruptException;
import org.jline.reader.impl.DefaultParser;
import org.jline.reader.impl.completer.StringsCompleter;
import org.jline.terminal.Terminal;
import org.jline.terminal.TerminalBuilder;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.index.EventStore;
import triage.index.Manifest;

/** {@code triage console}: an interactive session on one index. */
@Command(name = "console", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"An interactive session on one index: type the commands without 'triage' and without --index "
        + "(select, rank, fit, calibrate, region, info, help …). Line editing, history kept in DIR/console-history, "
        + "tab completion of commands, options, columns, samples and model scores.",
        "name NAME = CONDITION names a selection; $NAME uses it in a later --where; names lists them. "
            + "Ctrl-C clears the line while typing and stops a running command (what it finished is kept: toys, "
            + "stored results); Ctrl-D or quit leaves."},
    footer = ExitCodes.FOOTER)
public final class ConsoleCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  @Override
  public Integer call() throws Exception {
    // The index first: a missing or damaged one is reported before any terminal is set up (or warned about).
    Manifest manifest = manifest(index);
    try (Terminal terminal = TerminalBuilder.builder().name("triage").system(true).build()) {
      if (terminal.getWidth() <= 0) {
        // A terminal that reports no size (some serial lines and wrappers): assume the classic one.
        terminal.setSize(new org.jline.terminal.Size(80, 24));
      }
      return loop(terminal, index, manifest);
    }
  }

  private static Manifest manifest(Path index) {
    try (EventStore store = EventStore.open(index)) {
      return store.manifest();
    } catch (java.io.IOException e) {
      throw new java.io.UncheckedIOException(e);
    }
  }

  /** The read-run loop on a terminal (tests use a dumb terminal on streams). */
  static int loop(Terminal terminal, Path index) {
    return loop(terminal, index, manifest(index));
  }

  private static int loop(Terminal terminal, Path index, Manifest manifest) {
    Session session = new Session(index);
    java.util.function.IntSupplier previousWidth = Output.terminalWidth;
    Output.terminalWidth = () -> terminal.getType().startsWith("dumb") ? 0 : terminal.getWidth();
    DefaultParser parser = new DefaultParser();
    LineReader reader = LineReaderBuilder.builder().terminal(terminal).appName("triage").parser(parser)
        .completer(new StringsCompleter(completions(manifest)))
        .variable(LineReader.HISTORY_FILE, index.resolve("console-history"))
        .build();
    PrintWriter out = terminal.writer();
    // Ctrl-C while a command runs asks it to stop after its current step; while typing, the line reader
    // installs its own handler (clear the line) and restores this one afterwards.
    terminal.handle(Terminal.Signal.INT, signal -> {
      if (!triage.core.Cancellation.requested()) {
        triage.core.Cancellation.request();
        out.println();
        out.println("stopping after the current step ...");
        out.flush();
      }
    });
    out.println("triage console on " + index + " (" + manifest.totalEvents() + " events; 'help' lists commands, "
        + "Ctrl-D leaves)");
    out.flush();
    while (true) {
      String line;
      try {
        line = reader.readLine("triage> ");
      } catch (UserInterruptException e) {
        continue;
      } catch (EndOfFileException e) {
        break;
      }
      List<String> words = reader.getParsedLine() == null ? List.of() : reader.getParsedLine().words().stream()
          .filter(w -> !w.isEmpty()).toList();
      triage.core.Cancellation.clear();
      if (session.execute(line, words, out, out) < 0) {
        break;
      }
    }
    Output.terminalWidth = previousWidth;
    try {
      reader.getHistory().save();
    } catch (java.io.IOException e) {
      out.println("triage: could not save the history: " + e.getMessage());
    }
    return ExitCodes.OK;
  }

  /** Words offered by tab completion. */
  static List<String> completions(Manifest m) {
    TreeSet<String> words = new TreeSet<>();
    CommandLine root = Main.commandLine();
    for (var e : root.getSubcommands().entrySet()) {
      words.add(e.getKey());
      for (CommandLine.Model.OptionSpec o : e.getValue().getCommandSpec().options()) {
        words.addAll(List.of(o.names()));
      }
    }
    words.addAll(List.of("name", "names", "quit", "AND", "OR", "NOT", "BETWEEN", "IN", "abs", "min", "max", "log",
        "sqrt"));
    for (Manifest.Column c : m.columns()) {
      words.add(c.name());
    }
    for (Manifest.Sample s : m.samples()) {
      words.add(s.name());
    }
    for (Manifest.Model model : m.models()) {
      words.add("score:" + model.version());
      words.add(model.version());
    }
    return new ArrayList<>(words);
  }
}
