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
    Path namesFile = index.resolve(NAMES_FILE);
    String restored = restoreNames(session, namesFile);
    java.util.function.IntSupplier previousWidth = Output.terminalWidth;
    Output.terminalWidth = () -> terminal.getType().startsWith("dumb") ? 0 : terminal.getWidth();
    // The same word rule as scripts (Session.split): no backslash escapes; an open quote continues on the next line.
    DefaultParser parser = new DefaultParser().escapeChars(new char[0]).eofOnUnclosedQuote(true);
    Completions completer = new Completions(session, manifest);
    LineReader reader = LineReaderBuilder.builder().terminal(terminal).appName("triage").parser(parser)
        .completer(completer)
        .variable(LineReader.HISTORY_FILE, index.resolve("console-history"))
        // a line means what it says: no !-history expansion (a script would not do it), every line kept
        .option(LineReader.Option.DISABLE_EVENT_EXPANSION, true)
        .option(LineReader.Option.HISTORY_IGNORE_SPACE, false)
        .build();
    PrintWriter out = terminal.writer();
    // Ctrl-C while a command runs asks it to stop after its current step; while typing, the line reader
    // installs its own handler (clear the line) and restores this one afterwards.
    String[] running = new String[1];
    terminal.handle(Terminal.Signal.INT, signal -> {
      if (!triage.core.Cancellation.requested()) {
        triage.core.Cancellation.request();
        out.println();
        out.println(UNSTOPPABLE.contains(running[0])
            ? running[0] + " does not stop part way; it will finish (it writes its result whole)"
            : "stopping after the current step ...");
        out.flush();
      }
    });
    out.println("triage console on " + index + " (" + manifest.totalEvents() + " events; 'help' lists commands, "
        + "Ctrl-D leaves)");
    if (restored != null) {
      out.println(restored);
    }
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
      triage.core.Cancellation.clear();
      List<String> words;
      try {
        words = Session.split(line);
      } catch (triage.core.sample.InputException e) {
        out.println("triage: " + e.getMessage());
        continue;
      }
      running[0] = words.isEmpty() ? null : words.get(0);
      java.util.Map<String, String> before = new java.util.LinkedHashMap<>(session.names());
      int code = session.execute(line, words, out, out);
      running[0] = null;
      if (!before.equals(session.names())) {
        saveNames(session, namesFile, out);
      }
      if (code < 0) {
        break;
      }
      completer.refresh();
    }
    Output.terminalWidth = previousWidth;
    try {
      reader.getHistory().save();
    } catch (java.io.IOException e) {
      out.println("triage: could not save the history: " + e.getMessage());
    }
    return ExitCodes.OK;
  }

  /** The console's named selections, kept in the index folder beside its history (one "NAME = CONDITION" a line). */
  static final String NAMES_FILE = "console-names";

  /**
   * Reads the names of earlier sessions; each condition is checked against the index as it is now, and one that no
   * longer holds (a column or model gone) is dropped with a word. Returns the line to show, or null without names.
   */
  static String restoreNames(Session session, Path file) {
    if (!java.nio.file.Files.isRegularFile(file)) {
      return null;
    }
    List<String> kept = new ArrayList<>();
    List<String> dropped = new ArrayList<>();
    try (EventStore store = EventStore.open(session.index())) {
      for (String line : java.nio.file.Files.readAllLines(file)) {
        int eq = line.indexOf(" = ");
        if (eq <= 0) {
          continue;
        }
        String name = line.substring(0, eq);
        String condition = line.substring(eq + 3);
        try {
          triage.core.select.Where.parse(condition, store.kinds());
          session.names().put(name, condition);
          kept.add(name);
        } catch (triage.core.sample.InputException e) {
          dropped.add(name);
        }
      }
    } catch (java.io.IOException | RuntimeException e) {
      return "could not read the named selections of earlier sessions (" + file + "): " + e.getMessage();
    }
    if (kept.isEmpty() && dropped.isEmpty()) {
      return null;
    }
    return "named selections from earlier sessions: " + (kept.isEmpty() ? "none usable" : String.join(", ", kept))
        + (dropped.isEmpty() ? "" : "; dropped, as they no longer fit the index: " + String.join(", ", dropped))
        + " ('names' lists them)";
  }

  /** Writes the session's names (through a temporary file, so a crash leaves the previous list). */
  static void saveNames(Session session, Path file, PrintWriter out) {
    StringBuilder b = new StringBuilder();
    session.names().forEach((k, v) -> b.append(k).append(" = ").append(v).append('\n'));
    try {
      Path tmp = file.resolveSibling(file.getFileName() + ".tmp");
      java.nio.file.Files.writeString(tmp, b);
      java.nio.file.Files.move(tmp, file, java.nio.file.StandardCopyOption.REPLACE_EXISTING,
          java.nio.file.StandardCopyOption.ATOMIC_MOVE);
    } catch (java.io.IOException e) {
      out.println("triage: could not keep the named selections for later sessions: " + e.getMessage());
    }
  }

  /**
   * Commands that do not look at Ctrl-C: they stream files and write their result whole (an ingest commits once), so
   * the console says they will finish rather than that they stop.
   */
  static final java.util.Set<String> UNSTOPPABLE = java.util.Set.of("ingest", "generate", "followup");

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

  /**
   * Tab completion that follows the line: command names first; then the command's own options (not --index, which
   * the session adds); after an option that takes a sample, a column or a model, those; {@code $} and the session's
   * names; otherwise columns, scores, samples and the condition language's words. Inside an open quote (a
   * condition being typed) the last word of the condition is completed and the quote is left open. The index's
   * words are read again after every command, so a model fitted in the session is offered.
   */
  static final class Completions implements org.jline.reader.Completer {
    /** Options followed by a sample name. */
    private static final java.util.Set<String> SAMPLE_OPTIONS = java.util.Set.of("--sample", "--samples");
    /** Options followed by column names. */
    private static final java.util.Set<String> COLUMN_OPTIONS = java.util.Set.of("--column", "--x", "--y", "--by",
        "--features", "--feature", "--order-by");
    /** The session (for its names). */
    private final Session session;
    /** The command tree, built once (its commands and options do not change during a session). */
    private final CommandLine root = Main.commandLine();
    /** The condition language's own words. */
    private static final List<String> LANGUAGE = List.of("AND", "OR", "NOT", "BETWEEN", "IN", "abs", "min", "max",
        "log", "sqrt");
    /** Columns and scores. */
    private volatile List<String> columns;
    /** Sample names. */
    private volatile List<String> samples;
    /** Model versions. */
    private volatile List<String> models;

    Completions(Session session, Manifest manifest) {
      this.session = session;
      set(manifest);
    }

    private void set(Manifest m) {
      TreeSet<String> cols = new TreeSet<>();
      for (Manifest.Column c : m.columns()) {
        cols.add(c.name());
      }
      List<String> mods = new ArrayList<>();
      for (Manifest.Model model : m.models()) {
        cols.add("score:" + model.version());
        mods.add(model.version());
      }
      columns = List.copyOf(cols);
      samples = m.samples().stream().map(Manifest.Sample::name).toList();
      models = List.copyOf(mods);
    }

    /** Reads the index's words again (after a command that may have added a model). */
    void refresh() {
      try (EventStore store = EventStore.open(session.index())) {
        set(store.manifest());
      } catch (java.io.IOException | RuntimeException e) {
        // keep the previous words: completion must never break the console
      }
    }

    @Override
    public void complete(LineReader reader, org.jline.reader.ParsedLine line, List<org.jline.reader.Candidate> out) {
      List<String> words = line.words();
      int at = line.wordIndex();
      String word = line.word().substring(0, Math.min(line.wordCursor(), line.word().length()));
      if (at == 0) {
        TreeSet<String> first = new TreeSet<>(root.getSubcommands().keySet());
        first.remove("console");
        first.addAll(Session.SESSION_WORDS);
        first.forEach(w -> out.add(new org.jline.reader.Candidate(w)));
        return;
      }
      String command = words.get(0);
      String previous = at >= 1 ? words.get(at - 1) : "";
      boolean inQuote = openQuote(line.line(), line.cursor());
      List<String> offer = new ArrayList<>();
      if (inQuote) {
        // a condition being typed: complete its last word, keep the quote open
        int cut = word.length();
        while (cut > 0 && (Character.isLetterOrDigit(word.charAt(cut - 1))
            || "_:$".indexOf(word.charAt(cut - 1)) >= 0)) {
          cut--;
        }
        final int from = cut;
        String head = word.substring(0, from);
        for (String w : conditionWords()) {
          offer.add(head + w);
        }
        offer.forEach(w -> out.add(new org.jline.reader.Candidate(w, w.substring(from), null, null, null, null,
            false)));
        return;
      }
      if (SAMPLE_OPTIONS.contains(previous)) {
        offer.addAll(samples);
      } else if (previous.equals("--model")) {
        offer.addAll(models);
      } else if (COLUMN_OPTIONS.contains(previous)) {
        offer.addAll(columns);
      } else if (word.startsWith("-")) {
        CommandLine sub = root.getSubcommands().get(command);
        if (sub != null) {
          for (CommandLine.Model.OptionSpec o : sub.getCommandSpec().options()) {
            for (String n : o.names()) {
              if (n.startsWith("--") && !n.equals("--index")) {
                offer.add(n);
              }
            }
          }
        }
      } else {
        offer.addAll(conditionWords());
        offer.addAll(samples);
      }
      offer.forEach(w -> out.add(new org.jline.reader.Candidate(w)));
    }

    private List<String> conditionWords() {
      List<String> all = new ArrayList<>(columns);
      all.addAll(LANGUAGE);
      for (String n : session.names().keySet()) {
        all.add("$" + n);
      }
      return all;
    }

    /** Whether the cursor is inside a quote opened earlier on the line. */
    static boolean openQuote(String line, int cursor) {
      char open = 0;
      for (int i = 0; i < Math.min(cursor, line.length()); i++) {
        char c = line.charAt(i);
        if (open == 0 && (c == '"' || c == '\'')) {
          open = c;
        } else if (c == open) {
          open = 0;
        }
      }
      return open != 0;
    }
  }
}
