package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The console in a real pseudo-terminal: a child JVM runs {@code triage console} under {@code script(1)}, which
 * gives it a terminal of its own, and the test types into it. Checks tab completion, that history survives a
 * restart (the up arrow recalls the last session's line), and that Ctrl-C stops a running command without
 * leaving the console.
 */
class ConsolePtyTest {
  @TempDir
  Path dir;

  /** A console child with what it printed so far. */
  private static final class Child implements AutoCloseable {
    final Process process;
    final StringBuffer shown = new StringBuffer();
    final OutputStream keys;

    Child(Path index) throws IOException {
      String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
      String command = "stty cols 100 rows 30; " + String.join(" ", List.of(java, "-Xmx512m", "--add-modules", "jdk.incubator.vector",
          "--enable-native-access=ALL-UNNAMED", "-cp", "'" + System.getProperty("java.class.path") + "'",
          "triage.shell.Main", "console", "--index", "'" + index + "'"));
      ProcessBuilder pb = new ProcessBuilder("script", "-qfec", command, "/dev/null").redirectErrorStream(true);
      pb.environment().put("TERM", "xterm");
      process = pb.start();
      keys = process.getOutputStream();
      Thread reader = new Thread(() -> {
        byte[] buffer = new byte[4096];
        try (InputStream in = process.getInputStream()) {
          for (int n; (n = in.read(buffer)) > 0; ) {
            shown.append(new String(buffer, 0, n, StandardCharsets.UTF_8));
          }
        } catch (IOException e) {
          // the child ended
        }
      });
      reader.setDaemon(true);
      reader.start();
    }

    void type(String text) throws IOException {
      if (!process.isAlive()) {
        throw new AssertionError("the console ended (exit " + process.exitValue() + ") before '" + text
            + "' could be typed:\n" + shown);
      }
      keys.write(text.getBytes(StandardCharsets.UTF_8));
      keys.flush();
    }

    /** Whether the output holds the text (after a given offset) within some seconds. */
    boolean within(String text, int from, int seconds) throws InterruptedException {
      long end = System.nanoTime() + TimeUnit.SECONDS.toNanos(seconds);
      while (System.nanoTime() < end) {
        if (shown.indexOf(text, from) >= 0) {
          return true;
        }
        Thread.sleep(50);
      }
      return false;
    }

    /** Waits until the output holds the text (after a given offset), failing after a minute. */
    int await(String text, int from) throws InterruptedException {
      long end = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
      while (System.nanoTime() < end) {
        int at = shown.indexOf(text, from);
        if (at >= 0) {
          return at + text.length();
        }
        Thread.sleep(50);
      }
      throw new AssertionError("no '" + text + "' after offset " + from + " in:\n" + shown);
    }

    @Override
    public void close() throws InterruptedException {
      if (!process.waitFor(30, TimeUnit.SECONDS)) {
        process.destroyForcibly();
        throw new AssertionError("the console did not leave:\n" + shown);
      }
    }
  }

  @Test
  void completionHistoryAndCtrlCInARealTerminal() throws Exception {
    Assumptions.assumeTrue(Files.isExecutable(Path.of("/usr/bin/script")),
        "SKIPPED: script(1) from util-linux is needed to give the console a pseudo-terminal");
    Path index = equalWeightIndex(dir);

    try (Child c = new Child(index)) {
      int at = c.await("triage> ", 0);
      // Tab completes the unique command 'breakd' to 'breakdown'.
      c.type("breakd\t--by run --where \"m > 0\"\r");
      at = c.await("broken down by run", at);
      at = c.await("triage> ", at);
      // A command that would run for hours: Ctrl-C stops it and the console stays.
      c.type("rank --where \"m > 0\" --permutations 2000000000\r");
      at = c.await("m × pt", at);
      c.type("\u0003");
      if (!c.within("triage: cancelled", at, 20)) {
        // Seen once under a heavily loaded machine: the first Ctrl-C was echoed but not acted on. A user would
        // press it again; say so visibly rather than hide it.
        System.err.println("WARNING: ConsolePtyTest: the first Ctrl-C did not stop the command within 20 s; "
            + "pressing it again");
        c.type("\u0003");
      }
      at = c.await("triage: cancelled", at);
      at = c.await("triage> ", at);
      c.type("info\r");
      at = c.await("features   m, pt", at);
      c.type("quit\r");
    }
    assertTrue(Files.readString(index.resolve("console-history")).contains("breakdown --by run --where"));

    try (Child c = new Child(index)) {
      int at = c.await("triage> ", 0);
      // The up arrow (the terminal is in application cursor mode: ESC O A) recalls the previous session's last command before 'quit': 'info'.
      c.type("\u001bOA\u001bOA\r");
      at = c.await("features   m, pt", at);
      // Ctrl-D only at the prompt: typed while the command still prints, the terminal (not yet in raw mode) turns it
      // into an end-of-file that no one reads, and the console never sees it (seen once under load).
      c.await("triage> ", at);
      c.type("\u0004");
    }
  }

  /**
   * A small index with equal reference weights, so that 'rank' runs label permutations (it gives no resampling
   * p-value for unequal weights and a reference of fewer than twice the observed events, and would end at once): a
   * long command that Ctrl-C can stop. Also used by {@code RunSignalTest}.
   */
  static Path equalWeightIndex(Path dir) throws IOException {
    Files.writeString(dir.resolve("ref.csv"), "event,run,m,pt,w\n1,5,100.5,20,1.25\n2,5,120.25,30,1.25\n"
        + "3,6,90,25,1.25\n4,6,95,28,1.25\n");
    Files.writeString(dir.resolve("obs.csv"), "event,run,m,pt\n10,5,101,21\n11,6,99,22\n12,6,93,27\n");
    Path index = dir.resolve("index");
    assertEquals(0, CliTest.run("ingest", "--index", index.toString(), "--reference",
        dir.resolve("ref.csv").toString(), "--observed", dir.resolve("obs.csv").toString(), "--features", "m,pt",
        "--weight", "w", "--run", "run").code());
    return index;
  }
}
