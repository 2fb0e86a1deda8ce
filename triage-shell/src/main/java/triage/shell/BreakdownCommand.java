package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.inference.CountingSignificance;
import triage.core.provenance.ToolVersion;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.ColumnKind;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;
import triage.index.Selection;

/** {@code triage breakdown}: is an excess concentrated in a few runs, one detector region, one trigger? */
@Command(name = "breakdown", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Break a selection down by a bookkeeping column (run, block, or a category such as the detector "
        + "sector or trigger): per value the observed count, the expected reference yield, the excess and a local "
        + "Z, largest excess first; how much of the excess the top values hold; and a χ² test that observed/"
        + "expected is the same for every value (a real effect spread over the detector and the running "
        + "period passes it; a noisy sector or a few bad runs fail it)."},
    footer = ExitCodes.FOOTER)
public final class BreakdownCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Condition. */
  @Option(names = "--where", required = true, paramLabel = "CONDITION", description = "The selection.")
  String where;

  /** Column. */
  @Option(names = "--by", required = true, paramLabel = "COL", description = "A run, block or category column.")
  String by;

  /** Rows shown. */
  @Option(names = "--top", defaultValue = "15", paramLabel = "N", description = "Rows shown (default: ${DEFAULT-VALUE}).")
  int top;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** One value's yields. */
  record Row(String value, long observed, double expected, double expectedVariance) {}

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Manifest.Column column = m.column(by);
      if (column == null || !(column.kind() == ColumnKind.CATEGORY || column.kind() == ColumnKind.RUN
          || column.kind() == ColumnKind.BLOCK || column.kind() == ColumnKind.ID)) {
        throw new InputException(index, "breakdown needs a run, block or category column, not '" + by + "'");
      }
      Selection selection = store.where(where);
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      List<Row> rows = new ArrayList<>();
      if (column.kind() == ColumnKind.CATEGORY) {
        TreeSet<String> values = new TreeSet<>();
        values.addAll(m.sample(observed).categories().get(by));
        values.addAll(m.sample(reference).categories().get(by));
        int obs = Roles.ordinal(m, Role.OBSERVED);
        int ref = Roles.ordinal(m, Role.REFERENCE);
        for (String v : values) {
          List<SampleSums> s = store.sums(selection.and(new Selection.CategoryIn(by, java.util.Set.of(v))));
          rows.add(new Row(v, s.get(obs).count(), s.get(ref).sumOfWeights(), s.get(ref).sumOfSquaredWeights()));
        }
      } else {
        TreeMap<Long, double[]> acc = new TreeMap<>();
        BitSet om = store.mask(selection, observed);
        double[] ov = store.columns(observed, List.of(by))[0];
        for (int i = om.nextSetBit(0); i >= 0; i = om.nextSetBit(i + 1)) {
          acc.computeIfAbsent((long) ov[i], k -> new double[3])[0]++;
        }
        BitSet rm = store.mask(selection, reference);
        double[] rv = store.columns(reference, List.of(by))[0];
        double[] w = store.weights(reference);
        for (int i = rm.nextSetBit(0); i >= 0; i = rm.nextSetBit(i + 1)) {
          double[] a = acc.computeIfAbsent((long) rv[i], k -> new double[3]);
          a[1] += w[i];
          a[2] += w[i] * w[i];
        }
        acc.forEach((k, a) -> rows.add(new Row(String.valueOf(k), (long) a[0], a[1], a[2])));
      }
      long totalN = rows.stream().mapToLong(Row::observed).sum();
      double totalB = rows.stream().mapToDouble(Row::expected).sum();
      triage.core.inference.Homogeneity h = triage.core.inference.Homogeneity.of(
          rows.stream().mapToLong(Row::observed).toArray(), rows.stream().mapToDouble(Row::expected).toArray(),
          rows.stream().mapToDouble(Row::expectedVariance).toArray());
      double chi2 = h.statistic();
      int k = h.dof() + 1;
      double p = h.pValue();
      List<Row> sorted = new ArrayList<>(rows);
      sorted.sort((a, b) -> Double.compare(b.observed() - b.expected(), a.observed() - a.expected()));
      double excess = totalN - totalB;
      double top3 = 0;
      for (int i = 0; i < Math.min(3, sorted.size()); i++) {
        top3 += sorted.get(i).observed() - sorted.get(i).expected();
      }
      o.say("selection  %s, broken down by %s (%d values): observed %d, expected %.4g, excess %+.4g", where, by,
          rows.size(), totalN, totalB, excess);
      o.say("  %-14s %9s %11s %10s %8s", by, "observed", "expected", "excess", "local Z");
      List<Map<String, Object>> out = new ArrayList<>();
      for (int i = 0; i < sorted.size(); i++) {
        Row r = sorted.get(i);
        double z = r.expected() > 0 && r.expectedVariance() > 0 ? CountingSignificance.zBiFromBackground(
            r.observed(), r.expected(), Math.sqrt(r.expectedVariance())).z() : Double.NaN;
        if (i < top) {
          o.say("  %-14s %9d %11.4g %+10.4g %8s", r.value(), r.observed(), r.expected(),
              r.observed() - r.expected(), Double.isNaN(z) ? "no ref." : String.format(java.util.Locale.ROOT,
              "%.2f", z));
        }
        Map<String, Object> j = new LinkedHashMap<>();
        j.put("value", r.value());
        j.put("observed", r.observed());
        j.put("expected", r.expected());
        j.put("expectedStatError", Math.sqrt(r.expectedVariance()));
        j.put("excess", r.observed() - r.expected());
        j.put("localZBi", z);
        out.add(j);
      }
      if (sorted.size() > top) {
        o.say("  … %d more values (--top, or --json for all)", sorted.size() - top);
      }
      o.say("the top %d value%s hold%s %.0f%% of the excess; homogeneity of observed/expected across values: "
          + "χ² = %.1f for %d dof, p = %.3g%s", Math.min(3, sorted.size()), sorted.size() == 1 ? "" : "s",
          sorted.size() == 1 ? "s" : "", excess != 0 ? 100 * top3 / excess : Double.NaN, chi2,
          Math.max(0, k - 1), p, p < 1e-3 ? " (concentrated: look for a detector or data-taking cause)" : "");
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "breakdown");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("where", where);
      result.put("by", by);
      result.put("observed", totalN);
      result.put("expected", totalB);
      result.put("topThreeExcessFraction", excess != 0 ? top3 / excess : Double.NaN);
      result.put("homogeneityChi2", chi2);
      result.put("homogeneityDof", Math.max(0, k - 1));
      result.put("homogeneityP", p);
      result.put("values", out);
      o.result(result);
    }
    return ExitCodes.OK;
  }
}
