package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;
import java.util.concurrent.TimeUnit;
import org.junit.jupiter.api.Assumptions;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.examples.DemoScenario;

/**
 * The demo pipeline at the small size (a tenth of the events, 6 toys), its findings checked against the
 * scenario's truth, and its report rendered in a headless browser. About 20 s.
 */
class DemoPipelineTest {
  @TempDir
  static Path dir;

  private static JsonNode findings;
  private static Path out;

  @BeforeAll
  static void runTheDemo() throws IOException {
    out = dir.resolve("demo");
    CliTest.Run r = CliTest.run("demo", "--small", "--toys", "6", "--permutations", "50", "--out", out.toString(),
        "--json");
    assertEquals(0, r.code(), r.err());
    findings = CliTest.JSON.readTree(r.out()).get("findings");
  }

  @Test
  void theGlobalTestFlagsTheObservedSample() {
    JsonNode g = findings.get("globalTest");
    assertTrue(g.get("flagged").asBoolean(), "t_obs beyond every toy: " + g);
    assertEquals(6, g.get("toys").asInt());
    // With 6 toys the empirical bound is only p < 1/6; the asymptotic figure with the parameter count is large.
    assertTrue(z(g.get("zParameters")) > 3, g.toString());
  }

  @Test
  void theArtefactCheckNamesTheBurstsSectorAndRunsAndNotTheResonance() {
    JsonNode a = findings.get("artefact");
    assertEquals(List.of(String.valueOf(DemoScenario.NOISY_SECTOR)), strings(a.get("bySector").get(
        "concentratedIn")), a.toString());
    List<String> runs = strings(a.get("byRun").get("concentratedIn"));
    assertFalse(runs.isEmpty(), a.toString());
    Set<String> noisy = new HashSet<>();
    DemoScenario.NOISY_RUNS.forEach(x -> noisy.add(String.valueOf(x)));
    assertTrue(noisy.containsAll(runs), "only the burst's runs are named: " + runs);
    assertTrue(a.get("bySector").get("verdict").asText().startsWith("concentrated"));
    JsonNode r = findings.get("resonance");
    assertFalse(r.get("bySector").get("verdict").asText().startsWith("concentrated"), r.toString());
    assertFalse(r.get("byRun").get("verdict").asText().startsWith("concentrated"), r.toString());
  }

  @Test
  void inTheSelectionAroundTheResonanceTheTopFeatureIsThePhotonJetMass() {
    assertEquals("m_gj", findings.get("resonance").get("topFeaturesInWindow").get(0).get("feature").asText());
  }

  @Test
  void theDerivedRegionHoldsTheInjectedMassWindow() {
    JsonNode r = findings.get("resonance");
    assertTrue(r.get("containsResonanceMass").asBoolean(), r.toString());
    // At least half of the resonance (mass 750, width 18) falls inside the window, e.g. [720, 780] holds 90%.
    assertTrue(r.get("resonanceFractionInside").asDouble() > 0.5, r.toString());
    assertTrue(r.get("hi").asDouble() - r.get("lo").asDouble() <= 6 * DemoScenario.RESONANCE_WIDTH);
  }

  /**
   * The threshold: the small scenario's ideal significance is 4.9σ; the follow-up must give Z_Bi above 3 in the
   * frozen region, while the burst's selection, repaired in the follow-up, holds no more than its expectation plus
   * two events.
   */
  @Test
  void theResonanceSurvivesTheFollowUpAndTheArtefactDoesNot() {
    JsonNode r = findings.get("resonance");
    assertTrue(r.get("followUpZBi").asDouble() > 3, r.toString());
    JsonNode a = findings.get("artefact");
    assertTrue(a.get("followUpObserved").asDouble() <= a.get("followUpExpected").asDouble() + 2, a.toString());
  }

  @Test
  void theReportIsSelfContainedAndCarriesTheSameFindings() throws IOException {
    String html = Files.readString(out.resolve("report.html"));
    JsonNode doc = CliTest.JSON.readTree(out.resolve("report.json").toFile());
    assertEquals("triage-report/1", doc.get("format").asText());
    assertEquals(findings, doc.get("findings"));
    assertTrue(doc.get("steps").size() >= 15, "every step is recorded");
    assertTrue(doc.get("cautions").size() >= 5);
    // No resource is fetched: no src/href/url() pointing anywhere, no scripts.
    assertFalse(html.matches("(?s).*(src|href)\\s*=\\s*\"(https?:|//).*"), "no remote src or href");
    assertFalse(html.matches("(?s).*url\\(\\s*['\"]?(https?:|//).*"), "no remote url()");
    assertFalse(html.contains("<script"), "no scripts");
    assertFalse(html.contains("<img"), "plots are inline SVG");
    assertTrue(html.contains("<svg"), "plots are inline SVG");
    for (JsonNode line : findings.get("summary")) {
      assertTrue(html.contains(DemoReport.esc(line.asText())), line.asText());
    }
  }

  /** Renders the report in headless Chromium (Debian's package); says so visibly when it is not installed. */
  @Test
  void theReportRendersInAHeadlessBrowser() throws IOException, InterruptedException {
    String browser = null;
    for (String b : List.of("chromium", "chromium-browser")) {
      for (String d : System.getenv().getOrDefault("PATH", "/usr/bin").split(":")) {
        if (browser == null && Files.isExecutable(Path.of(d, b))) {
          browser = Path.of(d, b).toString();
        }
      }
    }
    if (browser == null) {
      System.err.println("SKIPPED: headless Chromium not found on PATH (apt-get install chromium); the report "
          + "was not rendered");
    }
    Assumptions.assumeTrue(browser != null, "SKIPPED: headless Chromium not installed (apt-get install chromium)");
    Path png = dir.resolve("report.png");
    List<String> common = new ArrayList<>(List.of(browser, "--headless", "--no-sandbox", "--disable-gpu",
        "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update",
        "--disable-sync", "--user-data-dir=" + dir.resolve("browser-profile"), "--window-size=1200,3000"));
    List<String> dump = new ArrayList<>(common);
    dump.add("--dump-dom");
    dump.add(out.resolve("report.html").toUri().toString());
    Process p = new ProcessBuilder(dump).redirectError(ProcessBuilder.Redirect.DISCARD).start();
    String dom = new String(p.getInputStream().readAllBytes(), java.nio.charset.StandardCharsets.UTF_8);
    assertTrue(p.waitFor(90, TimeUnit.SECONDS), "the browser finished");
    assertTrue(dom.contains("What the demo found"), "rendered DOM: " + dom.substring(0, Math.min(300,
        dom.length())));
    assertTrue(dom.contains("Follow-up on independent samples"));
    assertTrue(dom.contains("<svg"), "the plots are in the rendered page");
    List<String> shot = new ArrayList<>(common);
    shot.add("--screenshot=" + png);
    shot.add(out.resolve("report.html").toUri().toString());
    Process q = new ProcessBuilder(shot).redirectErrorStream(true).redirectOutput(ProcessBuilder.Redirect.DISCARD)
        .start();
    assertTrue(q.waitFor(90, TimeUnit.SECONDS), "the browser finished");
    assertTrue(Files.exists(png) && Files.size(png) > 20_000, "a screenshot with content");
  }

  private static double z(JsonNode n) {
    return n.isTextual() ? Double.parseDouble(n.asText()) : n.asDouble();
  }

  private static List<String> strings(JsonNode array) {
    List<String> s = new ArrayList<>();
    array.forEach(x -> s.add(x.asText()));
    return s;
  }
}
