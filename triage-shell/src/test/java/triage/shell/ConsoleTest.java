package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.ByteArrayInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import org.jline.terminal.Terminal;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The console on a dumb terminal fed from a stream, and batch scripts. */
class ConsoleTest {
  @TempDir
  Path dir;

  Path index;

  @BeforeEach
  void ingest() throws IOException {
    Files.writeString(dir.resolve("ref.csv"), "event,run,m,pt,w\n1,5,100.5,20,0.5\n2,5,120.25,30,1.5\n3,6,90,25,2\n");
    Files.writeString(dir.resolve("obs.csv"), "event,run,m,pt\n10,5,101,21\n11,6,99,22\n");
    index = dir.resolve("index");
    assertEquals(0, CliTest.run("ingest", "--index", index.toString(), "--reference",
        dir.resolve("ref.csv").toString(), "--observed", dir.resolve("obs.csv").toString(), "--features", "m,pt",
        "--weight", "w", "--run", "run").code());
  }

  private String console(String typed) throws IOException {
    ByteArrayOutputStream out = new ByteArrayOutputStream();
    try (Terminal t = new org.jline.terminal.impl.DumbTerminal("test", Terminal.TYPE_DUMB,
        new ByteArrayInputStream(typed.getBytes(StandardCharsets.UTF_8)), out, StandardCharsets.UTF_8)) {
      assertEquals(0, ConsoleCommand.loop(t, index));
    }
    return out.toString(StandardCharsets.UTF_8);
  }

  @Test
  void typedCommandsRunOnTheSessionIndexAndNamesCombine() throws IOException {
    String shown = console("name low = m < 110\nselect --where \"$low AND run = 5\"\nnames\nselect --where \"m >\"\n"
        + "select --where \"$nope\"\nquit\n");
    assertTrue(shown.contains("named low = m < 110"), shown);
    // By hand: reference event 1 (w 0.5) and observed event 10 pass (m < 110 and run 5).
    assertTrue(shown.contains("discovery  observed 1, expected 0.5000"), shown);
    assertTrue(shown.contains("expected a number, a column, a function or '('"), shown);
    assertTrue(shown.contains("no selection named 'nope' (named: low)"), shown);
    assertTrue(Files.exists(index.resolve("console-history")));
    assertTrue(Files.readString(index.resolve("console-history")).contains("name low = m < 110"));
  }

  /** Names outlive the console session (as its history does), checked against the index when they come back. */
  @Test
  void namesAreKeptForLaterSessions() throws IOException {
    console("name low = m < 110\nname mid = pt > 21\nquit\n");
    assertTrue(Files.readString(index.resolve(ConsoleCommand.NAMES_FILE)).contains("low = m < 110"));
    // a name whose column no longer exists is dropped with a word
    Files.writeString(index.resolve(ConsoleCommand.NAMES_FILE), "low = m < 110\nmid = pt > 21\ngone = mass > 1\n");
    String shown = console("select --where \"$low AND $mid\"\nquit\n");
    assertTrue(shown.contains("named selections from earlier sessions: low, mid; dropped, as they no longer fit "
        + "the index: gone"), shown);
    // by hand: m < 110 and pt > 21 hold for observed event 11 and reference event 3 (w 2)
    assertTrue(shown.contains("discovery  observed 1, expected 2.000"), shown);
  }

  @Test
  void completionsOfferCommandsOptionsAndColumns() throws IOException {
    try (var store = triage.index.EventStore.open(index)) {
      var words = ConsoleCommand.completions(store.manifest());
      assertTrue(words.containsAll(java.util.List.of("select", "--where", "rank", "m", "pt", "run", "observed")),
          words.toString());
    }
  }

  @Test
  void scriptsReplayAndStopAtTheFirstFailure() throws IOException {
    Path script = dir.resolve("s.triage");
    Files.writeString(script, "# a comment\nname r5 = run = 5\nselect --where \"$r5\" --json\n"
        + "select --where \"mass > 1\"\ninfo\n");
    CliTest.Run r = CliTest.run("run", "--index", index.toString(), script.toString());
    assertEquals(ExitCodes.INPUT, r.code(), r.err());
    assertTrue(r.out().contains("triage> select --where \"$r5\" --json"), r.out());
    assertTrue(r.err().contains("s.triage:4: this line failed"), r.err());
    assertTrue(!r.out().contains("triage> info"), r.out());
    CliTest.Run all = CliTest.run("run", "--index", index.toString(), "--keep-going", script.toString());
    assertTrue(all.out().contains("triage> info"), all.out());
  }

  /** --keep-going exits with the worst code by severity, not by number (an internal error is not hidden by a 3). */
  @org.junit.jupiter.api.Test
  void keepGoingReportsTheMostSevereExitCode() {
    org.junit.jupiter.api.Assertions.assertEquals(ExitCodes.INTERNAL, RunCommand.worse(ExitCodes.INTERNAL,
        ExitCodes.INPUT));
    org.junit.jupiter.api.Assertions.assertEquals(ExitCodes.INTERNAL, RunCommand.worse(ExitCodes.INPUT,
        ExitCodes.INTERNAL));
    org.junit.jupiter.api.Assertions.assertEquals(ExitCodes.INPUT, RunCommand.worse(ExitCodes.USAGE,
        ExitCodes.INPUT));
    org.junit.jupiter.api.Assertions.assertEquals(ExitCodes.USAGE, RunCommand.worse(0, ExitCodes.USAGE));
  }

  /** Words: no backslash escapes, empty quoted words kept, an open quote refused; the same in console and script. */
  @Test
  void linesSplitIntoWordsAsWritten() {
    assertEquals(java.util.List.of("select", "--where", "sector = 'a\\b'"),
        Session.split("select --where \"sector = 'a\\b'\""));
    assertEquals(java.util.List.of("export", "--out", "back\\slash.csv"),
        Session.split("export --out back\\slash.csv"));
    assertEquals(java.util.List.of("select", "--where", ""), Session.split("select --where \"\""));
    // quotes inside a word group and are removed, as in a shell
    assertEquals(java.util.List.of("select", "--where=m > 1 AND x = 'a'"),
        Session.split("select --where=\"m > 1 AND x = 'a'\""));
    assertEquals(java.util.List.of(), Session.split("   "));
    var open = org.junit.jupiter.api.Assertions.assertThrows(triage.core.sample.InputException.class,
        () -> Session.split("select --where \"m > 700"));
    assertTrue(open.getMessage().contains("a quote is left open"), open.getMessage());
  }

  /** $NAME stands for a condition only in conditions, and not inside their quoted strings. */
  @Test
  void namesExpandOnlyInConditions() throws IOException {
    Session s = new Session(index);
    java.io.StringWriter text = new java.io.StringWriter();
    java.io.PrintWriter w = new java.io.PrintWriter(text);
    assertEquals(0, s.execute("name low = \"m < 110\"", Session.split("name low = \"m < 110\""), w, w));
    // the quotes around a whole condition are not part of it
    assertEquals("m < 110", s.names().get("low"));
    assertEquals("(m < 110) AND 'x$low' = 'y'", s.expand("$low AND 'x$low' = 'y'"));
    // a condition is checked when it is named: an unknown column is refused then, not when used
    assertEquals(ExitCodes.INPUT, s.execute("name bad = mass >", Session.split("name bad = mass >"), w, w));
    assertTrue(!s.names().containsKey("bad"));
    // a name that $ could not read back is refused
    assertEquals(ExitCodes.USAGE, s.execute("name my-bump = m > 1", Session.split("name my-bump = m > 1"), w, w));
    w.flush();
    assertTrue(text.toString().contains("'my-bump' cannot be a name"), text.toString());
    // --where=... is expanded like --where ...; a path with a dollar sign is left alone
    Path out = dir.resolve("a$low.csv");
    String line = "export --sample observed --where=$low --out " + out;
    assertEquals(0, s.execute(line, Session.split(line), w, w), text.toString());
    assertTrue(Files.exists(out), text.toString());
    // --index=DIR is the session's index given again: not added a second time
    String info = "info --index=" + index;
    assertEquals(0, s.execute(info, Session.split(info), w, w), text.toString());
  }

  @Test
  void consoleHelpListsTheSessionWordsAndANestedConsoleIsRefused() throws IOException {
    Path script = dir.resolve("inner.triage");
    Files.writeString(script, "info\n");
    String shown = console("help\nconsole\nrun " + script + "\nquit\n");
    // a script run from the console runs on the session's index
    assertTrue(shown.contains("triage> info"), shown);
    assertTrue(shown.contains("name NAME = CONDITION"), shown);
    assertTrue(shown.contains("quit, exit, Ctrl-D"), shown);
    assertTrue(shown.contains("  select "), shown);
    assertTrue(shown.contains("already in a console"), shown);
  }

  /** Completion follows the line: a command's own options, samples after --sample, new models, open quotes. */
  @Test
  void completionFollowsTheLine() throws IOException {
    Session session = new Session(index);
    ConsoleCommand.Completions c;
    try (var store = triage.index.EventStore.open(index)) {
      c = new ConsoleCommand.Completions(session, store.manifest());
    }
    assertTrue(values(c, "select --").contains("--where"));
    assertTrue(!values(c, "select --").contains("--index"));
    assertTrue(!values(c, "select --").contains("--spec"), values(c, "select --").toString());
    assertEquals(java.util.Set.of("observed", "reference"), java.util.Set.copyOf(values(c, "events --sample ")));
    // after --column: columns only, not the language's functions (min, max)
    assertEquals(java.util.Set.of("m", "pt", "run", "event"), java.util.Set.copyOf(values(c, "hist --column ")));
    // inside an open quote: the condition's last word, the quote left open
    var inQuote = candidates(c, "select --where \"m > 1 AND p");
    assertTrue(inQuote.stream().anyMatch(k -> k.value().equals("m > 1 AND pt") && !k.complete()),
        inQuote.stream().map(org.jline.reader.Candidate::value).toList().toString());
    assertTrue(!values(c, "select --where ").contains("score:m1"));
    assertEquals(0, CliTest.run("fit", "--index", index.toString(), "--layers", "2", "--max-iterations", "5",
        "--version-name", "m1").code());
    c.refresh();
    assertTrue(values(c, "select --where ").contains("score:m1"));
    session.names().put("high", "m > 100");
    assertTrue(values(c, "select --where ").contains("$high"));
  }

  private static java.util.List<org.jline.reader.Candidate> candidates(ConsoleCommand.Completions c, String line) {
    var parser = new org.jline.reader.impl.DefaultParser().escapeChars(new char[0]);
    var parsed = parser.parse(line, line.length(), org.jline.reader.Parser.ParseContext.COMPLETE);
    java.util.List<org.jline.reader.Candidate> out = new java.util.ArrayList<>();
    c.complete(null, parsed, out);
    return out;
  }

  private static java.util.List<String> values(ConsoleCommand.Completions c, String line) {
    return candidates(c, line).stream().map(org.jline.reader.Candidate::value).toList();
  }

  /** Scripts: a byte-order mark, a quote left open, quit part way, and a missing index. */
  @Test
  void scriptsTolerateAMarkReportOpenQuotesAndSayWhereTheyStop() throws IOException {
    Path bom = dir.resolve("bom.triage");
    Files.writeString(bom, "\uFEFF# starts with a byte-order mark\ninfo\n");
    CliTest.Run b = CliTest.run("run", "--index", index.toString(), bom.toString());
    assertEquals(0, b.code(), b.err());
    Path open = dir.resolve("open.triage");
    Files.writeString(open, "select --where \"m > 100\nquit\ninfo\n");
    CliTest.Run o = CliTest.run("run", "--index", index.toString(), "--json", "--keep-going", open.toString());
    assertEquals(ExitCodes.INPUT, o.code(), o.err());
    assertTrue(o.err().contains("a quote is left open"), o.err());
    assertTrue(o.err().contains("open.triage:2: 'quit' ends the script here; 1 later line(s) not run"), o.err());
    var json = new com.fasterxml.jackson.databind.ObjectMapper().readTree(o.out());
    assertEquals(2, json.get("steps").size(), o.out());
    assertEquals(ExitCodes.INPUT, json.get("steps").get(0).get("exitCode").asInt());
    CliTest.Run none = CliTest.run("run", "--index", dir.resolve("nothing").toString(), bom.toString());
    assertEquals(ExitCodes.INPUT, none.code(), none.err());
    assertTrue(!none.out().contains("triage> info"), none.out());
  }
}
