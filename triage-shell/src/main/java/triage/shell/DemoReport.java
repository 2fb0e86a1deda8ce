package triage.shell;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

/**
 * The demo's report as one self-contained HTML page: the findings, the plots inlined as SVG, every step's
 * command and result object, the cautions. No scripts, fonts, styles or images are fetched from anywhere.
 */
final class DemoReport {
  private DemoReport() {
    // no instance
  }

  private static final String STYLE = """
      body { font-family: sans-serif; max-width: 60rem; margin: 2rem auto; padding: 0 1rem; color: #222; }
      h1 { font-size: 1.6rem; } h2 { font-size: 1.25rem; margin-top: 2rem; border-bottom: 1px solid #ccc; }
      table { border-collapse: collapse; margin: 0.5rem 0; } td, th { padding: 0.2rem 0.6rem; text-align: right; }
      th { background: #eee; } td:first-child, th:first-child { text-align: left; }
      .caution { background: #fff6e0; border-left: 4px solid #d90; padding: 0.5rem 1rem; }
      .summary li { margin: 0.3rem 0; } pre { background: #f6f6f6; padding: 0.5rem; overflow-x: auto; }
      figure { margin: 1rem 0; } figure svg { max-width: 100%; height: auto; } code { background: #f0f0f0; }
      """;

  /** The page for a report document written by {@link DemoCommand}. */
  static String html(JsonNode doc, Path plots) throws IOException {
    StringBuilder b = new StringBuilder();
    JsonNode f = doc.path("findings");
    JsonNode s = doc.path("settings");
    b.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\">\n<title>triage report: demo ")
        .append(esc(s.path("scenario").asText())).append(" scenario</title>\n<style>").append(STYLE)
        .append("</style></head><body>\n");
    b.append("<h1>triage report: the fictional photon-plus-jet demo</h1>\n<p>")
        .append(esc(doc.path("tool").asText())).append(", ").append(esc(doc.path("created").asText()))
        .append(", ").append(esc(s.path("scenario").asText())).append(" scenario, seed ")
        .append(s.path("seed").asLong()).append(", ").append(String.format(Locale.ROOT, "%.0f s", doc.path(
            "seconds").asDouble())).append(". The index is <code>").append(esc(s.path("index").asText()))
        .append("</code>.</p>\n");

    b.append("<h2>What the demo found</h2>\n<ul class=\"summary\">\n");
    for (JsonNode line : f.path("summary")) {
      b.append("<li>").append(esc(line.asText())).append("</li>\n");
    }
    b.append("</ul>\n");
    cautions(b, doc, 2);

    JsonNode g = f.path("globalTest");
    b.append("<h2>1. The global test</h2>\n<p>The ratio model was fitted to the observed against the reference "
        + "sample; its test statistic t is compared with pseudo-experiments drawn from the reference and fitted "
        + "the same way.</p>\n");
    table(b, new String[] {"quantity", "value"},
        row("test statistic t", num(g.path("testStatistic"))),
        row("network parameters", g.path("parameters").asText()),
        row("fit met its stopping rule", g.path("converged").asText()),
        row("pseudo-experiments", g.path("toys").asText()),
        row("largest toy t", num(g.path("maxToyT"))),
        row("empirical p (" + g.path("empiricalBound").asText().toLowerCase(Locale.ROOT).replace('_', ' ') + ")",
            num(g.path("empiricalP"))),
        row("Z from χ² with the parameter count", num(g.path("zParameters"))),
        row("Z from the χ² fitted to the toys", num(g.path("zFitted"))),
        row("fitted χ² degrees of freedom", num(g.path("fittedDof"))));
    b.append("<p>Headline: ").append(esc(g.path("headline").asText())).append("</p>\n<ul>\n");
    for (JsonNode warning : g.path("warnings")) {
      b.append("<li>").append(esc(warning.asText())).append("</li>\n");
    }
    b.append("</ul>\n");
    figure(b, plots.resolve("toys.svg"), "Toy t values with the χ² curves and the observed t.");

    JsonNode h = f.path("highScore");
    b.append("<h2>2. The high-score events</h2>\n<p>Selection <code>")
        .append(esc(s.path("analystChoices").path("highScore").asText())).append("</code>: ")
        .append(h.path("observed").asLong()).append(" observed events on ").append(num(h.path("expected")))
        .append(" expected, local Z<sub>Bi</sub> = ").append(num(h.path("localZBi")))
        .append(" (local, and selected on these data). The features that set them apart from the reference "
            + "(weighted Kolmogorov–Smirnov distance; resampling p-values adjusted over the features by the "
            + "max-statistic method are computed for the comparison inside a selection):</p>\n");
    features(b, h.path("topFeatures"));

    JsonNode a = f.path("artefact");
    b.append("<h2>3. Artefact checks</h2>\n<p>A real effect is spread over the detector and the running period; "
        + "a noise burst sits in a few runs and one sector. The high-score events broken down by sector and by "
        + "run, largest excess first:</p>\n");
    breakdown(b, "sector", a.path("bySector"));
    breakdown(b, "run", a.path("byRun"));
    b.append("<p>Burst selection (analyst's choice from the tables above): <code>").append(esc(a.path("selection")
        .asText())).append("</code>. It holds ").append(a.path("highScoreInBurst").asLong()).append(
        " of the high-score events (").append(a.path("highScoreOutsideBurst").asLong()).append(
        " remain outside it). On the follow-up samples, where the sector was repaired: ").append(a.path(
        "followUpObserved").asLong()).append(" observed on ").append(num(a.path("followUpExpected"))).append(
        " expected, Z<sub>Bi</sub> = ").append(num(a.path("followUpZBi"))).append(".</p>\n");

    JsonNode r = f.path("resonance");
    b.append("<h2>4. The resonance</h2>\n<p>Away from the burst, a sliding-window scan of the photon–jet mass (")
        .append(esc(s.path("analystChoices").path("massScan").asText())).append(") picks <code>")
        .append(esc(r.path("condition").asText())).append("</code>.</p>\n");
    table(b, new String[] {"quantity", "value"},
        row("observed in the window", r.path("observed").asText()),
        row("expected (reference)", num(r.path("expected"))),
        row("local Z_Bi (MC statistics only)", num(r.path("localZBi"))),
        row("windows tried", r.path("windowsTried").asText()),
        row("Bonferroni bound on the global Z", num(r.path("bonferroniGlobalZ"))),
        row("local Z_Bi with the systematics", num(r.path("zWithSystematics"))),
        row("share selected, same in every sector: p", num(r.path("bySector").path("shareP"))),
        row("share selected, same in every run: p", num(r.path("byRun").path("shareP"))));
    b.append("<p>Systematic stress: ").append(esc(r.path("stressVerdict").asText())).append("</p>\n<p>Features "
        + "that set the window's events apart from the whole reference:</p>\n");
    features(b, r.path("topFeaturesInWindow"));
    b.append("<p>And from the reference events inside the same window (what the window does not explain):</p>\n");
    features(b, r.path("topFeaturesLeftInsideWindow"));
    breakdown(b, "sector", r.path("bySector"));
    breakdown(b, "run", r.path("byRun"));
    figure(b, plots.resolve("m_gj.svg"), "The photon–jet mass away from the burst: observed against the "
        + "reference, with the ratio.");

    b.append("<h2>5. Follow-up on independent samples</h2>\n<p>The window was frozen as a cut-and-count region "
        + "before the follow-up samples were read.</p>\n");
    table(b, new String[] {"quantity", "value"},
        row("observed", r.path("followUpObserved").asText()),
        row("expected", num(r.path("followUpExpected"))),
        row("Z_Bi", num(r.path("followUpZBi"))),
        row("p_Bi", num(r.path("followUpPBi"))));

    JsonNode t = doc.path("truth");
    b.append("<h2>6. What the scenario injected (known only because the data are generated)</h2>\n");
    table(b, new String[] {"quantity", "value"},
        row("resonance mass and width (GeV)", num(t.path("resonanceMass")) + " ± " + num(t.path(
            "resonanceWidth"))),
        row("ideal (true-density) significance", num(t.path("idealSignificance"))),
        row("resonance events, observed sample", t.path("observed").path("resonance").asText()),
        row("noise-burst events, observed sample", t.path("observed").path("noise-burst").asText()),
        row("resonance events, follow-up sample", t.path("followup-observed").path("resonance").asText()),
        row("noisy sector and runs", t.path("noisySector").asText() + "; " + join(t.path("noisyRuns"))),
        row("share of the resonance inside the window", num(r.path("resonanceFractionInside"))));

    cautions(b, doc, 7);
    b.append("<h2>8. Provenance: every step</h2>\n<p>Each step is an ordinary triage command; its full result "
        + "object is below (the same as its <code>--json</code> output).</p>\n");
    for (JsonNode step : doc.path("steps")) {
      b.append("<details><summary>").append(esc(step.path("title").asText())).append(": <code>triage ")
          .append(esc(join(step.path("command")))).append("</code></summary>\n<pre>")
          .append(esc(pretty(step.path("result")))).append("</pre></details>\n");
    }
    b.append("</body></html>\n");
    return b.toString();
  }

  private static void cautions(StringBuilder b, JsonNode doc, int section) {
    b.append("<h2>").append(section == 2 ? "Cautions" : section + ". Cautions").append("</h2>\n<div class=\"caution\""
        + "><ul>\n");
    for (JsonNode c : doc.path("cautions")) {
      b.append("<li>").append(esc(c.asText())).append("</li>\n");
    }
    b.append("</ul></div>\n");
  }

  private static void features(StringBuilder b, JsonNode rows) {
    String[][] r = new String[rows.size()][];
    for (int i = 0; i < rows.size(); i++) {
      JsonNode x = rows.get(i);
      r[i] = row(x.path("feature").asText(), num(x.path("ks")), num(x.path("ksAsymptoticP")),
          num(x.path("adjustedP")));
    }
    table(b, new String[] {"feature", "KS distance", "KS p (asymptotic, a guide)", "resampling p, max-T adjusted"},
        r);
  }

  private static void breakdown(StringBuilder b, String by, JsonNode w) {
    JsonNode v = w.path("values");
    String[][] r = new String[v.size()][];
    for (int i = 0; i < v.size(); i++) {
      JsonNode x = v.get(i);
      r[i] = row(x.path("value").asText(), x.path("observed").asText(), num(x.path("expected")),
          num(x.path("excess")), num(x.path("localZBi")), num(x.path("share")), num(x.path("sharePull")));
    }
    table(b, new String[] {by, "observed", "expected", "excess", "local Z", "share selected", "share pull"}, r);
    b.append("<p>Verdict by ").append(by).append(": <b>").append(esc(w.path("verdict").asText()))
        .append("</b>. Same share selected in every ").append(by).append(": p = ").append(num(w.path("shareP")))
        .append("; observed/expected the same in every ").append(by).append(": p = ")
        .append(num(w.path("homogeneityP"))).append(".</p>\n");
  }

  private static void figure(StringBuilder b, Path svg, String caption) throws IOException {
    if (!Files.exists(svg)) {
      return;
    }
    String text = Files.readString(svg);
    int start = text.indexOf("<svg");
    b.append("<figure>").append(start >= 0 ? text.substring(start) : text).append("<figcaption>")
        .append(esc(caption)).append("</figcaption></figure>\n");
  }

  private static void table(StringBuilder b, String[] head, String[]... rows) {
    b.append("<table><tr>");
    for (String h : head) {
      b.append("<th>").append(esc(h)).append("</th>");
    }
    b.append("</tr>\n");
    for (String[] r : rows) {
      b.append("<tr>");
      for (String c : r) {
        b.append("<td>").append(esc(c)).append("</td>");
      }
      b.append("</tr>\n");
    }
    b.append("</table>\n");
  }

  private static String[] row(String... cells) {
    return cells;
  }

  private static String num(JsonNode n) {
    if (n.isMissingNode() || n.isNull()) {
      return "–";
    }
    if (n.isTextual()) {
      return n.asText().equals("Infinity") ? "∞" : n.asText().equals("-Infinity") ? "−∞"
          : n.asText().equals("NaN") ? "–" : n.asText();
    }
    double v = n.asDouble();
    if (Double.isNaN(v)) {
      return "–";
    }
    if (Double.isInfinite(v)) {
      return v > 0 ? "∞" : "−∞";
    }
    if (n.isIntegralNumber()) {
      return n.asText();
    }
    return Math.abs(v) >= 1e-3 && Math.abs(v) < 1e6 ? String.format(Locale.ROOT, "%.4g", v)
        : String.format(Locale.ROOT, "%.3g", v);
  }

  private static String join(JsonNode array) {
    StringBuilder s = new StringBuilder();
    for (JsonNode x : array) {
      s.append(s.length() == 0 ? "" : " ").append(x.asText());
    }
    return s.toString();
  }

  private static String pretty(JsonNode n) {
    try {
      return Output.JSON.writeValueAsString(n);
    } catch (JsonProcessingException e) {
      return n.toString();
    }
  }

  static String esc(String s) {
    StringBuilder b = new StringBuilder(s.length());
    for (int i = 0; i < s.length(); i++) {
      char c = s.charAt(i);
      switch (c) {
        case '<' -> b.append("&lt;");
        case '>' -> b.append("&gt;");
        case '&' -> b.append("&amp;");
        case '"' -> b.append("&quot;");
        default -> b.append(c);
      }
    }
    return b.toString();
  }
}
