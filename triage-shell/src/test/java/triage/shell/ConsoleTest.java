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
}
