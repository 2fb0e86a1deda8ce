package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.inference.CountingSignificance;
import triage.core.provenance.ToolVersion;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;
import triage.index.Selection;

/** {@code triage select}: counts and yields of a selection, observed against expected. */
@Command(name = "select", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Summarise a selection: per sample the events, Σw and √Σw²; observed against the expected "
        + "reference yield with its MC statistical error, each systematic variation, the excess and a local "
        + "significance.",
        "The condition uses SQL's WHERE syntax, e.g. \"m_gj BETWEEN 700 AND 800 AND sector <> '11'\"."},
    footer = ExitCodes.FOOTER)
public final class SelectCommand implements Callable<Integer> {
  /** The cautions printed with every local significance. */
  static final List<String> CAUTIONS = List.of(
      "The significance is local: it is not corrected for the look-elsewhere effect.",
      "If this selection was chosen or tuned on these data, its significance is biased upwards; confirm it on "
          + "independent data.",
      "The background error is the reference sample's MC statistics only; systematic variations are listed "
          + "separately.",
      "A p-value is not the probability that a signal is real.");

  /** Said when the index's follow-up samples are shown beside the discovery figures. */
  static final String FOLLOWUP_CAUTION = "The follow-up samples are shown for comparison only: a selection chosen or "
      + "tuned while looking at them is no longer checked independently by them. Choose it on the discovery samples, "
      + "freeze it (triage region), then check it (triage followup).";

  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** The condition. */
  @Option(names = "--where", required = true, paramLabel = "CONDITION",
      description = "Condition in SQL WHERE syntax over the index's columns (score:VERSION for model scores).")
  String where;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Selection selection = store.where(where);
      unknownCategoryValues(o, m, store.kinds(), where);
      List<SampleSums> sums = store.sums(selection);
      List<String> variations = m.spec().variations().stream().map(v -> v.name()).toList();
      o.say("selection  %s", where);
      o.say("%-20s %-19s %10s %14s %12s", "sample", "role", "events", "Σw", "√Σw²");
      List<Map<String, Object>> samples = new ArrayList<>();
      for (int i = 0; i < sums.size(); i++) {
        SampleSums s = sums.get(i);
        Manifest.Sample facts = m.samples().get(i);
        o.say("%-20s %-19s %10d %14.6g %12.4g", s.sample(), facts.role(), s.count(), s.sumOfWeights(),
            s.statisticalError());
        Map<String, Object> j = new LinkedHashMap<>();
        j.put("name", s.sample());
        j.put("role", facts.role().label());
        j.put("events", s.count());
        j.put("sumOfWeights", s.sumOfWeights());
        j.put("sumOfSquaredWeights", s.sumOfSquaredWeights());
        Map<String, Object> vs = new LinkedHashMap<>();
        for (int k = 0; k < s.upSums().length; k++) {
          vs.put(variations.get(k), Map.of("up", s.upSums()[k], "down", s.downSums()[k]));
        }
        j.put("variations", vs);
        samples.add(j);
      }
      List<Map<String, Object>> comparisons = new ArrayList<>();
      compare(o, m, sums, variations, Role.OBSERVED, Role.REFERENCE, "discovery", comparisons);
      compare(o, m, sums, variations, Role.FOLLOWUP_OBSERVED, Role.FOLLOWUP_REFERENCE, "follow-up", comparisons);
      List<String> cautions = new ArrayList<>(CAUTIONS);
      if (comparisons.stream().anyMatch(c -> "follow-up".equals(c.get("label")))) {
        cautions.add(FOLLOWUP_CAUTION);
      }
      if (!comparisons.isEmpty()) {
        o.say("");
        for (String c : cautions) {
          o.say("note: %s", c);
        }
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "select");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("indexId", m.indexId());
      result.put("where", where);
      result.put("samples", samples);
      result.put("comparisons", comparisons);
      result.put("cautions", cautions);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  private static void compare(Output o, Manifest m, List<SampleSums> sums, List<String> variations, Role observed,
      Role reference, String label, List<Map<String, Object>> out) {
    int obs = index(m, observed);
    int ref = index(m, reference);
    if (obs < 0 || ref < 0) {
      return;
    }
    SampleSums n = sums.get(obs);
    SampleSums b = sums.get(ref);
    double excess = n.count() - b.sumOfWeights();
    Map<String, Object> j = new LinkedHashMap<>();
    j.put("label", label);
    j.put("observedSample", n.sample());
    j.put("referenceSample", b.sample());
    j.put("observed", n.count());
    j.put("expected", b.sumOfWeights());
    j.put("expectedStatError", b.statisticalError());
    j.put("excess", excess);
    o.say("");
    if (b.sumOfWeights() > 0 && b.statisticalError() > 0) {
      var zbi = CountingSignificance.zBiFromBackground(n.count(), b.sumOfWeights(), b.statisticalError());
      double zlr = CountingSignificance.likelihoodRatioZ(n.count(), b.sumOfWeights());
      j.put("localZBi", zbi.z());
      j.put("localPBi", zbi.pValue());
      j.put("localZKnownBackground", zlr);
      o.say("%-10s observed %d, expected %.4g ± %.2g (MC stat.), excess %+.4g; local Z_Bi = %.2f (p %s); "
          + "local Z with b known = %.2f", label, n.count(), b.sumOfWeights(), b.statisticalError(), excess, zbi.z(),
          Output.pEquals(zbi.pValue()), zlr);
    } else {
      j.put("localZBi", Double.NaN);
      j.put("localPBi", Double.NaN);
      j.put("localZKnownBackground", Double.NaN);
      o.say("%-10s observed %d, expected %.4g: %s, no significance", label, n.count(), b.sumOfWeights(),
          b.count() == 0 ? "no reference events selected" : "the selected reference weights do not sum to a "
          + "positive yield");
    }
    Map<String, Object> vs = new LinkedHashMap<>();
    for (int k = 0; k < b.upSums().length; k++) {
      double up = b.upSums()[k];
      double down = b.downSums()[k];
      double nominal = b.sumOfWeights();
      // the MC error scaled with the shifted yield; defined only when both yields are positive
      boolean scalable = nominal > 0 && b.statisticalError() > 0;
      double zUp = up > 0 && scalable ? CountingSignificance.zBiFromBackground(n.count(), up,
          b.statisticalError() * up / nominal).z() : Double.NaN;
      double zDown = down > 0 && scalable ? CountingSignificance.zBiFromBackground(n.count(), down,
          b.statisticalError() * down / nominal).z() : Double.NaN;
      o.say("  %-16s expected up %.4g (%+.1f%%): Z_Bi %.2f; down %.4g (%+.1f%%): Z_Bi %.2f", variations.get(k), up,
          100 * (up / nominal - 1), zUp, down, 100 * (down / nominal - 1), zDown);
      vs.put(variations.get(k), Map.of("expectedUp", up, "expectedDown", down, "localZBiUp", zUp, "localZBiDown",
          zDown));
    }
    j.put("variations", vs);
    out.add(j);
  }

  /**
   * Warns (stderr) about a quoted category value that no sample of the index holds: a typo such as
   * {@code sector = 'Z'} selects nothing (or, with {@code <>}, everything) without an error, so the known values
   * are named.
   */
  static void unknownCategoryValues(Output o, Manifest m, Map<String, triage.core.select.Where.Kind> kinds,
      String where) {
    var named = triage.core.select.Where.categoryValues(triage.core.select.Where.parse(where, kinds), kinds);
    for (var e : named.entrySet()) {
      java.util.TreeSet<String> known = new java.util.TreeSet<>();
      for (Manifest.Sample s : m.samples()) {
        List<String> values = s.categories() == null ? null : s.categories().get(e.getKey());
        if (values != null) {
          known.addAll(values);
        }
      }
      List<String> unknown = e.getValue().stream().filter(v -> !known.contains(v)).toList();
      if (!unknown.isEmpty()) {
        List<String> shown = known.stream().limit(30).map(v -> "'" + v + "'").toList();
        o.note("warning: %s %s: no sample holds %s; the values that occur are %s%s", e.getKey(),
            unknown.size() == 1 ? "value" : "values", String.join(", ", unknown.stream().map(v -> "'" + v + "'")
            .toList()), String.join(", ", shown), known.size() > shown.size() ? " … (" + known.size() + " in all)"
            : "");
      }
    }
  }

  private static int index(Manifest m, Role role) {
    for (int i = 0; i < m.samples().size(); i++) {
      if (m.samples().get(i).role() == role) {
        return i;
      }
    }
    return -1;
  }
}
