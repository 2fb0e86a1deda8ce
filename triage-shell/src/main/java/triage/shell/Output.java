package triage.shell;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.PrintWriter;
import java.util.Locale;
import picocli.CommandLine;

/**
 * Where a command's results go. With {@code --json}, stdout carries exactly one JSON object and human text goes
 * to stderr; without it, human text goes to stdout.
 */
public final class Output {
  /** Serialises results; doubles keep full precision. */
  static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT)
      .disable(SerializationFeature.FAIL_ON_EMPTY_BEANS);

  /**
   * Where this thread's commands also hand their result objects (the demo collects them for its report);
   * unset, results go only to {@code --json}.
   */
  static final ThreadLocal<java.util.function.Consumer<Object>> RESULTS = new ThreadLocal<>();

  /**
   * The width text must fit: the console's terminal width while a console runs, else {@code COLUMNS} when set,
   * else 0 (no limit: pipes and files get whole lines).
   */
  static volatile java.util.function.IntSupplier terminalWidth = Output::columnsVariable;

  /**
   * Runs a command with the result object it hands over caught in {@code into[0]}, then restores the thread's
   * previous result sink (a demo or a script may itself be running inside a script run).
   */
  static int capture(Object[] into, java.util.function.IntSupplier command) {
    java.util.function.Consumer<Object> previous = RESULTS.get();
    RESULTS.set(v -> into[0] = v);
    try {
      return command.getAsInt();
    } finally {
      if (previous == null) {
        RESULTS.remove();
      } else {
        RESULTS.set(previous);
      }
    }
  }

  /** Whether JSON was asked for. */
  private final boolean json;

  /** Whether a table line was cut to the width. */
  private boolean cut;

  /** The command's stdout. */
  private final PrintWriter out;

  /** The command's stderr. */
  private final PrintWriter err;

  /** Output for a command, given whether {@code --json} was set. */
  public Output(CommandLine.Model.CommandSpec spec, boolean json) {
    this.json = json;
    this.out = spec.commandLine().getOut();
    this.err = spec.commandLine().getErr();
  }

  /** Whether JSON was asked for. */
  public boolean json() {
    return json;
  }

  /** The width to fit (0: no limit). */
  public int width() {
    return json ? 0 : terminalWidth.getAsInt();
  }

  /**
   * Prints a line of human text (stdout, or stderr with {@code --json}), fitted to {@link #width()}: prose is
   * wrapped at spaces; a table row (two spaces inside) is cut with … and a note at the end says so.
   */
  public void say(String format, Object... args) {
    PrintWriter w = json ? err : out;
    String line = args.length == 0 ? format : String.format(Locale.ROOT, format, args);
    int width = width();
    for (String part : line.split("\n", -1)) {
      if (width > 0 && part.codePointCount(0, part.length()) > width) {
        if (TABLE_ROW.matcher(part.strip()).find()) {
          cut = true;
          w.println(part.substring(0, part.offsetByCodePoints(0, width - 1)) + "…");
        } else {
          wrap(w, part, width);
        }
      } else {
        w.println(part);
      }
    }
    w.flush();
  }

  /** Two spaces between words: columns of a table. */
  private static final java.util.regex.Pattern TABLE_ROW = java.util.regex.Pattern.compile("\\S {2,}\\S");

  /**
   * A p-value for people to read: three significant digits, or "< 1e-300" when it is below the range of doubles
   * and has rounded to 0 (printing "0.00" would claim a certainty no test gives).
   */
  static String p(double value) {
    return value == 0 ? "< 1e-300" : String.format(java.util.Locale.ROOT, "%.3g", value);
  }

  /** "= p" with {@link #p}, or "< 1e-300" for a p-value that has rounded to 0. */
  static String pEquals(double value) {
    return value == 0 ? p(value) : "= " + p(value);
  }

  /** Wraps prose at spaces, continuation lines indented two more than the first. */
  static void wrap(PrintWriter w, String line, int width) {
    int lead = 0;
    while (lead < line.length() && line.charAt(lead) == ' ') {
      lead++;
    }
    String indent = " ".repeat(Math.min(lead + 2, width / 2));
    StringBuilder current = new StringBuilder(line.substring(0, lead));
    boolean first = true;
    for (String word : line.substring(lead).split(" ")) {
      int have = current.codePointCount(0, current.length());
      boolean empty = have == (first ? lead : indent.length());
      if (!empty && have + 1 + word.codePointCount(0, word.length()) > width) {
        w.println(current);
        current = new StringBuilder(indent);
        first = false;
        empty = true;
      }
      if (!empty) {
        current.append(' ');
      }
      current.append(word);
    }
    w.println(current);
  }

  private static int columnsVariable() {
    try {
      String columns = System.getenv("COLUMNS");
      return columns == null ? 0 : Math.max(0, Integer.parseInt(columns.strip()));
    } catch (NumberFormatException e) {
      return 0;
    }
  }

  /** Prints a progress or warning line on stderr. */
  public void note(String format, Object... args) {
    err.println(args.length == 0 ? format : String.format(Locale.ROOT, format, args));
    err.flush();
  }

  /** Prints the one JSON object of a {@code --json} run (does nothing otherwise). */
  public void result(Object value) {
    if (cut) {
      say("(table rows were cut at the terminal's width of %d columns: widen it, or use --json for everything)",
          width());
      cut = false;
    }
    java.util.function.Consumer<Object> sink = RESULTS.get();
    if (sink != null) {
      sink.accept(value);
    }
    if (!json) {
      return;
    }
    try {
      out.println(JSON.writeValueAsString(value));
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("cannot write JSON result", e);
    }
    out.flush();
  }

  /**
   * Checks a file the command will write before any work is done: a folder is refused, and missing parent folders
   * are made (as {@code calibrate --plot} does). Null (option not given) passes.
   */
  static void prepareFile(java.nio.file.Path file) throws java.io.IOException {
    if (file == null) {
      return;
    }
    if (java.nio.file.Files.isDirectory(file)) {
      throw new triage.core.sample.InputException(file, "is a folder; expected the name of a file to write");
    }
    java.nio.file.Path parent = file.toAbsolutePath().getParent();
    if (parent != null) {
      if (java.nio.file.Files.exists(parent) && !java.nio.file.Files.isDirectory(parent)) {
        throw new triage.core.sample.InputException(parent, "is a file, not a folder to write " + file.getFileName()
            + " into");
      }
      java.nio.file.Files.createDirectories(parent);
    }
  }

  /** Checks a folder the command will write into: an existing file of that name is refused. */
  static void prepareFolder(java.nio.file.Path folder) {
    if (folder != null && java.nio.file.Files.exists(folder) && !java.nio.file.Files.isDirectory(folder)) {
      throw new triage.core.sample.InputException(folder, "is a file, not a folder to write into");
    }
  }
}
