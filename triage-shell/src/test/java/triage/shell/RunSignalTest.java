package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code triage run --json} in a child JVM without a UTF-8 locale: Ctrl-C (SIGINT) stops the running line, and the
 * run still prints its one object with the lines run so far; text and JSON are UTF-8 whatever the locale.
 */
class RunSignalTest {
  @TempDir
  Path dir;

  @Test
  void ctrlCEndsTheScriptWithItsObjectAndOutputIsUtf8() throws Exception {
    Path index = ConsolePtyTest.equalWeightIndex(dir);
    Path script = dir.resolve("long.triage");
    Files.writeString(script, "info\nrank --where \"m > 0\" --permutations 2000000000\ninfo\n");
    String java = Path.of(System.getProperty("java.home"), "bin", "java").toString();
    ProcessBuilder pb = new ProcessBuilder(java, "-Xmx512m", "--add-modules", "jdk.incubator.vector", "-cp",
        System.getProperty("java.class.path"), "triage.shell.Main", "run", "--json", "--index", index.toString(),
        script.toString());
    pb.environment().put("LC_ALL", "C");
    pb.environment().put("LANG", "C");
    Process p = pb.start();
    ByteArrayOutputStream out = new ByteArrayOutputStream();
    StringBuffer err = new StringBuffer();
    Thread outReader = drain(p.getInputStream(), b -> out.writeBytes(b));
    Thread errReader = drain(p.getErrorStream(), b -> err.append(new String(b, StandardCharsets.UTF_8)));
    long deadline = System.nanoTime() + TimeUnit.SECONDS.toNanos(60);
    while (err.indexOf("m × pt") < 0 && System.nanoTime() < deadline && p.isAlive()) {
      Thread.sleep(50);
    }
    assertTrue(err.indexOf("m × pt") >= 0, "rank did not start, or its text is not UTF-8: " + err);
    new ProcessBuilder("kill", "-INT", Long.toString(p.pid())).start().waitFor();
    assertTrue(p.waitFor(60, TimeUnit.SECONDS), "the run did not stop after Ctrl-C: " + err);
    outReader.join();
    errReader.join();
    assertEquals(ExitCodes.CANCELLED, p.exitValue(), err.toString());
    JsonNode json = new ObjectMapper().readTree(out.toString(StandardCharsets.UTF_8));
    List<Integer> codes = new java.util.ArrayList<>();
    json.get("steps").forEach(s -> codes.add(s.get("exitCode").asInt()));
    assertEquals(List.of(0, ExitCodes.CANCELLED), codes, json.toString());
    assertEquals(ExitCodes.CANCELLED, json.get("exitCode").asInt());
    assertTrue(json.get("steps").get(1).get("text").asText().contains("m > 0"), json.toString());
    assertTrue(err.indexOf("long.triage:2: this line was cancelled") >= 0, err.toString());
  }

  private static Thread drain(InputStream in, java.util.function.Consumer<byte[]> sink) {
    Thread t = new Thread(() -> {
      byte[] buffer = new byte[4096];
      try (in) {
        for (int n; (n = in.read(buffer)) > 0; ) {
          sink.accept(java.util.Arrays.copyOf(buffer, n));
        }
      } catch (IOException e) {
        // the child ended
      }
    });
    t.setDaemon(true);
    t.start();
    return t;
  }
}
