package triage.shell;

import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import picocli.CommandLine;
import triage.core.sample.InputException;
import triage.core.select.Where;
import triage.index.EventStore;

/**
 * What the console and batch scripts share: one index, named selections, and the rule that turns a typed line
 * into a command. Lines are the command line's words without {@code triage}; {@code --index} is added for
 * commands that take it. {@code name NAME = CONDITION} names a selection; {@code $NAME} in a later condition
 * stands for it (in parentheses, so names combine: {@code $high AND NOT $noisy}); {@code names} lists them.
 *
 * <p>Words ({@link #split}): separated by blanks; double or single quotes group, anywhere in a word, and are
 * removed, the other kind inside them kept (as in {@code --where "sector = 'a'"} or {@code --where="m > 1"}); a
 * backslash is an ordinary character; an empty
 * quoted word is a word; a quote left open is an error. {@code $NAME} is replaced only in conditions (the value of
 * {@code --where} and a {@code name} definition) and not inside a condition's quoted strings, so paths and labels
 * keep their dollar signs. A name stores its condition as expanded when it is defined.
 */
final class Session {
  /** Commands that read the session's index. */
  static final Set<String> INDEX_COMMANDS = Set.of("info", "select", "rank", "fit", "calibrate", "region", "hist",
      "events", "scan", "breakdown", "export", "derive", "map", "stress", "run");

  /** Words of the session itself, not commands of the command line. */
  static final List<String> SESSION_WORDS = List.of("name", "names", "help", "quit", "exit");

  /** The index. */
  private final Path index;

  /** Named selections, in definition order. */
  private final Map<String, String> names = new LinkedHashMap<>();

  /** Session over an index. */
  Session(Path index) {
    this.index = index;
  }

  /** The index. */
  Path index() {
    return index;
  }

  /** Named selections. */
  Map<String, String> names() {
    return names;
  }

  /** A name: a letter or underscore, then letters, digits or underscores. */
  static final Pattern NAME = Pattern.compile("[A-Za-z_][A-Za-z0-9_]*");

  /** A $name reference. */
  private static final Pattern REFERENCE = Pattern.compile("\\$(" + NAME.pattern() + ")");

  /** The words of one line (see the class comment); a quote left open is an {@link InputException}. */
  static List<String> split(String line) {
    List<String> words = new ArrayList<>();
    StringBuilder word = new StringBuilder();
    boolean inWord = false;
    char open = 0;
    for (int i = 0; i < line.length(); i++) {
      char c = line.charAt(i);
      if (open != 0) {
        if (c == open) {
          open = 0;
        } else {
          word.append(c);
        }
      } else if (c == '"' || c == '\'') {
        // a quote anywhere in a word, as in --where="m > 1", groups and is removed
        open = c;
        inWord = true;
      } else if (Character.isWhitespace(c)) {
        if (inWord) {
          words.add(word.toString());
          word.setLength(0);
          inWord = false;
        }
      } else {
        word.append(c);
        inWord = true;
      }
    }
    if (open != 0) {
      throw new InputException(null, "a quote is left open: close it, or quote it with the other kind (\" "
          + "inside '...', or ' inside \"...\")");
    }
    if (inWord) {
      words.add(word.toString());
    }
    return List.copyOf(words);
  }

  /**
   * Replaces $name by its condition in parentheses outside the condition's quoted strings; unknown names are an
   * error naming the known ones.
   */
  String expand(String condition) {
    StringBuilder b = new StringBuilder();
    int i = 0;
    while (i < condition.length()) {
      char c = condition.charAt(i);
      if (c == '\'' || c == '"') {
        int close = condition.indexOf(c, i + 1);
        int end = close < 0 ? condition.length() : close + 1;
        b.append(condition, i, end);
        i = end;
        continue;
      }
      Matcher m = REFERENCE.matcher(condition).region(i, condition.length());
      if (c == '$' && m.lookingAt()) {
        String value = names.get(m.group(1));
        if (value == null) {
          throw new InputException(null, "no selection named '" + m.group(1) + "' (named: "
              + (names.isEmpty() ? "none yet; define one with: name NAME = CONDITION" : String.join(", ",
              names.keySet())) + ")");
        }
        b.append('(').append(value).append(')');
        i = m.end();
        continue;
      }
      b.append(c);
      i++;
    }
    return b.toString();
  }

  /**
   * Runs one line split into words by {@link #split}, printing to the writers.
   *
   * @return the exit code, or -1 for a request to leave
   */
  int execute(String line, List<String> words, PrintWriter out, PrintWriter err) {
    if (words.isEmpty()) {
      return 0;
    }
    String first = words.get(0);
    if (first.equals("quit") || first.equals("exit")) {
      return -1;
    }
    try {
      if (first.equals("name")) {
        return name(line, out, err);
      }
      if (first.equals("names")) {
        names.forEach((k, v) -> out.println(k + " = " + v));
        if (names.isEmpty()) {
          out.println("no named selections (define one with: name NAME = CONDITION)");
        }
        return 0;
      }
      if (first.equals("help") && words.size() == 1) {
        help(out);
        return 0;
      }
      if (first.equals("console")) {
        err.println("triage: already in a console on " + index + " (a console on another index: leave with quit, "
            + "then triage console --index DIR)");
        return ExitCodes.USAGE;
      }
      List<String> args = new ArrayList<>();
      boolean conditionNext = false;
      for (String w : words) {
        if (conditionNext) {
          args.add(expand(w));
        } else if (w.startsWith("--where=")) {
          args.add("--where=" + expand(w.substring("--where=".length())));
        } else {
          args.add(w);
        }
        conditionNext = w.equals("--where");
      }
      boolean hasIndex = args.stream().anyMatch(a -> a.equals("--index") || a.startsWith("--index="));
      if (INDEX_COMMANDS.contains(first) && !hasIndex && !args.contains("-h") && !args.contains("--help")) {
        args.add(1, "--index");
        args.add(2, index.toString());
      }
      String derivedName;
      try {
        derivedName = first.equals("derive") ? derivedName(args) : null;
      } catch (IllegalArgumentException e) {
        // a usage error, as for name
        err.println("triage: " + e.getMessage());
        return ExitCodes.USAGE;
      }
      DeriveCommand.lastCondition = null;
      int code = Main.run(args.toArray(String[]::new), out, err);
      if (code == 0 && derivedName != null && DeriveCommand.lastCondition != null) {
        names.put(derivedName, DeriveCommand.lastCondition);
        out.println("named " + derivedName + " = " + DeriveCommand.lastCondition);
      }
      return code;
    } catch (InputException e) {
      err.println("triage: " + e.getMessage());
      return ExitCodes.INPUT;
    } finally {
      out.flush();
      err.flush();
    }
  }

  /** {@code name NAME = CONDITION}: the condition checked against the index's columns before it is kept. */
  private int name(String line, PrintWriter out, PrintWriter err) {
    Matcher m = Pattern.compile("^\\s*name\\s+(\\S+?)\\s*=\\s*(.+)$").matcher(line.strip());
    if (!m.matches()) {
      err.println("usage: name NAME = CONDITION   (then use $NAME in --where)");
      return ExitCodes.USAGE;
    }
    String name = m.group(1);
    if (!NAME.matcher(name).matches()) {
      err.println("triage: '" + name + "' cannot be a name: use letters, digits and underscores, starting with a "
          + "letter or underscore (so that $" + name + " reads as one name)");
      return ExitCodes.USAGE;
    }
    String condition = m.group(2).strip();
    if (condition.length() >= 2 && (condition.charAt(0) == '"' || condition.charAt(0) == '\'')
        && condition.charAt(condition.length() - 1) == condition.charAt(0)
        && condition.indexOf(condition.charAt(0), 1) == condition.length() - 1) {
      // the whole condition quoted, as it would be after --where
      condition = condition.substring(1, condition.length() - 1).strip();
    }
    String expanded = expand(condition);
    try (EventStore store = EventStore.open(index)) {
      Where.parse(expanded, store.kinds());
    } catch (java.io.IOException e) {
      throw new java.io.UncheckedIOException(e);
    }
    names.put(name, expanded);
    out.println("named " + name + " = " + expanded);
    return 0;
  }

  /** The name of {@code derive --name NAME} or {@code --name=NAME}, checked; null without one. */
  private static String derivedName(List<String> args) {
    String name = null;
    for (int i = 0; i < args.size(); i++) {
      if (args.get(i).equals("--name") && i + 1 < args.size()) {
        name = args.get(i + 1);
      } else if (args.get(i).startsWith("--name=")) {
        name = args.get(i).substring("--name=".length());
      }
    }
    if (name != null && !NAME.matcher(name).matches()) {
      throw new IllegalArgumentException("'" + name + "' cannot be a name: use letters, digits and underscores, "
          + "starting with a letter or underscore (so that $" + name + " reads as one name)");
    }
    return name;
  }

  /** The console's own help: its words, then the commands. */
  static void help(PrintWriter out) {
    out.println("Type a command as on the command line, without 'triage' and without --index (this session's index"
        + " is added):");
    CommandLine root = Main.commandLine();
    for (var e : root.getSubcommands().entrySet()) {
      if (e.getKey().equals("console") || e.getKey().equals("help")) {
        continue;
      }
      String[] description = e.getValue().getCommandSpec().usageMessage().description();
      String first = description.length == 0 ? "" : description[0];
      int stop = first.indexOf(": ");
      int dot = first.indexOf(". ");
      int cut = Math.min(stop < 0 ? first.length() : stop, dot < 0 ? first.length() : dot);
      String summary = first.substring(0, cut);
      if (summary.length() > 90) {
        summary = summary.substring(0, 87) + "...";
      }
      out.printf(java.util.Locale.ROOT, "  %-10s %s%n", e.getKey(), summary);
    }
    out.println("Session words:");
    out.println("  name NAME = CONDITION   name a selection (checked against the index's columns now)");
    out.println("  $NAME                   in a --where condition: the named selection, in parentheses");
    out.println("  names                   list the named selections (the console keeps them for later sessions; a "
        + "script's last for the script)");
    out.println("  help COMMAND            a command's options (also: COMMAND --help)");
    out.println("  quit, exit, Ctrl-D      leave; Ctrl-C stops a running command after its current step");
  }
}
