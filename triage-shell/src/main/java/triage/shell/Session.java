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

/**
 * What the console and batch scripts share: one index, named selections, and the rule that turns a typed line
 * into a command. Lines are the command line's words without {@code triage}; {@code --index} is added for
 * commands that take it. {@code name NAME = CONDITION} names a selection; {@code $NAME} in a later line stands
 * for it (in parentheses, so names combine: {@code $high AND NOT $noisy}); {@code names} lists them.
 */
final class Session {
  /** Commands that read the session's index. */
  static final Set<String> INDEX_COMMANDS = Set.of("info", "select", "rank", "fit", "calibrate", "region", "hist", "events", "scan", "breakdown", "export", "derive", "map", "stress");

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

  /** A $name reference. */
  private static final Pattern REFERENCE = Pattern.compile("\\$([A-Za-z_][A-Za-z0-9_]*)");

  /** Replaces $name by its condition in parentheses; unknown names are an error naming the known ones. */
  String expand(String text) {
    Matcher m = REFERENCE.matcher(text);
    StringBuilder b = new StringBuilder();
    while (m.find()) {
      String condition = names.get(m.group(1));
      if (condition == null) {
        throw new triage.core.sample.InputException(null, "no selection named '" + m.group(1) + "' (named: "
            + (names.isEmpty() ? "none yet; define one with: name NAME = CONDITION" : String.join(", ",
            names.keySet())) + ")");
      }
      m.appendReplacement(b, Matcher.quoteReplacement("(" + condition + ")"));
    }
    m.appendTail(b);
    return b.toString();
  }

  /**
   * Runs one line (already split into words), printing to the writers.
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
        Matcher m = Pattern.compile("^\\s*name\\s+([A-Za-z_][A-Za-z0-9_]*)\\s*=\\s*(.+)$").matcher(line);
        if (!m.matches()) {
          err.println("usage: name NAME = CONDITION   (then use $NAME in --where)");
          return ExitCodes.USAGE;
        }
        names.put(m.group(1), expand(m.group(2).strip()));
        out.println("named " + m.group(1) + " = " + names.get(m.group(1)));
        return 0;
      }
      if (first.equals("names")) {
        names.forEach((k, v) -> out.println(k + " = " + v));
        if (names.isEmpty()) {
          out.println("no named selections (define one with: name NAME = CONDITION)");
        }
        return 0;
      }
      List<String> args = new ArrayList<>();
      for (String w : words) {
        args.add(expand(w));
      }
      if (INDEX_COMMANDS.contains(first) && !args.contains("--index") && !args.contains("-h")
          && !args.contains("--help")) {
        args.add(1, "--index");
        args.add(2, index.toString());
      }
      DeriveCommand.lastCondition = null;
      int code = Main.run(args.toArray(String[]::new), out, err);
      int at = args.indexOf("--name");
      if (code == 0 && first.equals("derive") && at >= 0 && at + 1 < args.size()
          && DeriveCommand.lastCondition != null) {
        names.put(args.get(at + 1), DeriveCommand.lastCondition);
        out.println("named " + args.get(at + 1) + " = " + DeriveCommand.lastCondition);
      }
      return code;
    } catch (triage.core.sample.InputException e) {
      err.println("triage: " + e.getMessage());
      return ExitCodes.INPUT;
    } finally {
      out.flush();
      err.flush();
    }
  }
}
