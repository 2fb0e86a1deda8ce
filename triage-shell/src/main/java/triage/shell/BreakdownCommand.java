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
import triage.core.inference.SelectionShare;
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
    description = {"Break a selection down by bookkeeping columns (run, block, or a category such as the detector "
        + "sector or trigger; default: all of them): per value the observed count, the expected reference yield, "
        + "the excess and a local Z, largest excess first, with the value's share of its observed events that the "
        + "selection takes and that share's pull. Two homogeneity tests per column: the selection's share of the "
        + "observed events is the same in every value (Pearson χ² and G-test of the selected/not-selected table; "
        + "needs no simulation), and observed/expected is the same in every value. A real effect spread over the "
        + "detector and the running period passes both; a noisy sector or a few bad runs fail them. One verdict "
        + "line per column; for runs, the share in run order as well (time stability)."},
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

  /** Columns. */
  @Option(names = "--by", split = ",", paramLabel = "COL,...",
      description = "Run, block or category columns (default: every one of them in the index).")
  List<String> by;

  /** Rows shown. */
  @Option(names = "--top", defaultValue = "15", paramLabel = "N", description = "Rows shown (default: ${DEFAULT-VALUE}).")
  int top;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** One value's yields. */
  record Row(String value, long observed, double expected, double expectedVariance, long observedAll) {}

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    if (top < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--top must be at least 1");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      List<String> columns = by;
      if (columns == null || columns.isEmpty()) {
        columns = m.columns().stream().filter(c -> c.kind() == ColumnKind.CATEGORY || c.kind() == ColumnKind.RUN
            || c.kind() == ColumnKind.BLOCK).map(Manifest.Column::name).toList();
        if (columns.isEmpty()) {
          throw new InputException(index, "has no run, block or category column to break a selection down by");
        }
      }
      Selection selection = store.where(where);
      List<Map<String, Object>> results = new ArrayList<>();
      List<String> verdicts = new ArrayList<>();
      for (String c : columns) {
        Map<String, Object> r = column(store, m, selection, c, 2 * columns.size(), o);
        results.add(r);
        verdicts.add(c + ": " + r.get("verdict"));
        if (columns.size() > 1) {
          o.say("");
        }
      }
      if (columns.size() > 1) {
        o.say("verdicts");
        verdicts.forEach(v -> o.say("  " + v));
      }
      o.say("(verdict thresholds, after Bonferroni over the %d tests of this breakdown, two per column: p < 0.001 "
          + "concentrated, p < 0.05 somewhat uneven; the p-values shown are unadjusted)", 2 * columns.size());
      Map<String, Object> result = new LinkedHashMap<>();
      if (columns.size() == 1) {
        result.putAll(results.get(0));
      } else {
        result.put("command", "breakdown");
        result.put("tool", "triage " + ToolVersion.get());
        result.put("index", index.toString());
        result.put("where", where);
        result.put("columns", results);
        result.put("verdicts", verdicts);
        result.put("verdictTests", 2 * columns.size());
      }
      o.result(result);
    }
    return ExitCodes.OK;
  }

  private Map<String, Object> column(EventStore store, Manifest m, Selection selection, String by, int tests,
      Output o)
      throws java.io.IOException {
    {
      Manifest.Column column = m.column(by);
      if (column == null || !(column.kind() == ColumnKind.CATEGORY || column.kind() == ColumnKind.RUN
          || column.kind() == ColumnKind.BLOCK || column.kind() == ColumnKind.ID)) {
        throw new InputException(index, "breakdown needs a run, block or category column, not '" + by + "'");
      }
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      List<Row> rows = new ArrayList<>();
      String keyedBy = by;
      if (column.kind() == ColumnKind.CATEGORY) {
        TreeSet<String> values = new TreeSet<>();
        values.addAll(m.sample(observed).categories().get(by));
        values.addAll(m.sample(reference).categories().get(by));
        int obs = Roles.ordinal(m, Role.OBSERVED);
        int ref = Roles.ordinal(m, Role.REFERENCE);
        for (String v : values) {
          Selection.CategoryIn in = new Selection.CategoryIn(by, java.util.Set.of(v));
          List<SampleSums> s = store.sums(selection.and(in));
          long all = store.sums(Selection.all().and(in)).get(obs).count();
          rows.add(new Row(v, s.get(obs).count(), s.get(ref).sumOfWeights(), s.get(ref).sumOfSquaredWeights(),
              all));
        }
      } else {
        // A block is a luminosity block, numbered within its run (README, docs/sample-spec.md): block 137 of one
        // run has nothing to do with block 137 of another, so blocks are keyed by (run, block) when the index has
        // a run column (until 2026-12-04 they were pooled by number across runs).
        String runColumn = column.kind() == ColumnKind.BLOCK ? runColumn(m) : null;
        TreeMap<Key, double[]> acc = new TreeMap<>();
        BitSet om = store.mask(selection, observed);
        double[] ov = store.columns(observed, List.of(by))[0];
        double[] orun = runColumn != null ? store.columns(observed, List.of(runColumn))[0] : null;
        for (int i = 0; i < ov.length; i++) {
          double[] a = acc.computeIfAbsent(Key.of(orun, ov, i), k -> new double[4]);
          a[3]++;
          a[0] += om.get(i) ? 1 : 0;
        }
        BitSet rm = store.mask(selection, reference);
        double[] rv = store.columns(reference, List.of(by))[0];
        double[] rrun = runColumn != null ? store.columns(reference, List.of(runColumn))[0] : null;
        double[] w = store.weights(reference);
        // compensated sums per value, as everywhere else (plain += gave 152.4999999999999 for 152.5)
        java.util.Map<Key, triage.core.stats.NeumaierSum[]> sums = new java.util.HashMap<>();
        for (int i = rm.nextSetBit(0); i >= 0; i = rm.nextSetBit(i + 1)) {
          Key key = Key.of(rrun, rv, i);
          acc.computeIfAbsent(key, k -> new double[4]);
          triage.core.stats.NeumaierSum[] s = sums.computeIfAbsent(key,
              k -> new triage.core.stats.NeumaierSum[] {new triage.core.stats.NeumaierSum(),
                  new triage.core.stats.NeumaierSum()});
          s[0].add(w[i]);
          s[1].add(w[i] * w[i]);
        }
        sums.forEach((k, s) -> {
          acc.get(k)[1] = s[0].value();
          acc.get(k)[2] = s[1].value();
        });
        acc.forEach((k, a) -> rows.add(new Row(k.toString(), (long) a[0], a[1], a[2], (long) a[3])));
        keyedBy = runColumn != null ? runColumn + ":" + by : by;
      }
      long[] nObs = rows.stream().mapToLong(Row::observed).toArray();
      long[] nAll = rows.stream().mapToLong(Row::observedAll).toArray();
      double[] bExp = rows.stream().mapToDouble(Row::expected).toArray();
      double[] bVar = rows.stream().mapToDouble(Row::expectedVariance).toArray();
      long totalN = rows.stream().mapToLong(Row::observed).sum();
      double totalB = rows.stream().mapToDouble(Row::expected).sum();
      long totalAll = rows.stream().mapToLong(Row::observedAll).sum();
      triage.core.inference.Homogeneity h = triage.core.inference.Homogeneity.of(nObs, bExp, bVar);
      SelectionShare share = SelectionShare.of(nObs, nAll);
      java.util.Map<String, Double> pullOf = new java.util.HashMap<>();
      for (int i = 0; i < rows.size(); i++) {
        pullOf.put(rows.get(i).value(), share.pulls()[i]);
      }
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
      o.say("selection  %s, broken down by %s (%d values): observed %d of %d, expected %.4g, excess %+.4g",
          where, keyedBy.equals(by) ? by : by + " within its run (" + keyedBy + ")", rows.size(), totalN, totalAll,
          totalB, excess);
      o.say("  %-14s %9s %11s %10s %8s %8s %6s", keyedBy, "observed", "expected", "excess", "local Z", "share",
          "pull");
      List<Map<String, Object>> out = new ArrayList<>();
      for (int i = 0; i < sorted.size(); i++) {
        Row r = sorted.get(i);
        double z = r.expected() > 0 && r.expectedVariance() > 0 ? CountingSignificance.zBiFromBackground(
            r.observed(), r.expected(), Math.sqrt(r.expectedVariance())).z() : Double.NaN;
        double fraction = r.observedAll() > 0 ? (double) r.observed() / r.observedAll() : Double.NaN;
        double pull = pullOf.get(r.value());
        if (i < top) {
          o.say("  %-14s %9d %11.4g %+10.4g %8s %8.4f %6.2f", r.value(), r.observed(), r.expected(),
              r.observed() - r.expected(), Double.isNaN(z) ? "no ref." : z == Double.NEGATIVE_INFINITY ? "-inf"
              : String.format(java.util.Locale.ROOT, "%.2f", z), fraction, pull);
        }
        Map<String, Object> j = new LinkedHashMap<>();
        j.put("value", r.value());
        j.put("observed", r.observed());
        j.put("observedAll", r.observedAll());
        j.put("share", fraction);
        j.put("sharePull", pull);
        j.put("expected", r.expected());
        j.put("expectedStatError", Math.sqrt(r.expectedVariance()));
        j.put("excess", r.observed() - r.expected());
        j.put("localZBi", z);
        out.add(j);
      }
      if (sorted.size() > top) {
        o.say("  … %d more values (--top, or --json for all)", sorted.size() - top);
      }
      o.say("share of the observed events selected: %.4g overall; same share in every %s? Pearson χ² = %.1f, "
          + "G = %.1f for %d dof, p %s (G: %s)", totalAll > 0 ? (double) totalN / totalAll : Double.NaN, by,
          share.pearson(), share.g(), share.dof(), Output.pEquals(share.pearsonP()), Output.p(share.gP()));
      o.say("observed/expected the same in every %s? χ² = %.1f for %d dof, p %s; the top %d value%s hold%s "
          + "%.0f%% of the excess", by, chi2, Math.max(0, k - 1), Double.isNaN(p) ? "-" : Output.pEquals(p),
          Math.min(3, sorted.size()), sorted.size() == 1 ? "" : "s", sorted.size() == 1 ? "s" : "",
          excess != 0 ? 100 * top3 / excess : Double.NaN);
      if (h.leftOut() > 0) {
        o.say("  left out of that ratio test: %d value%s without reference weight or whose reference weights sum "
            + "to zero or less (no positive expectation to compare with), holding %d observed event%s", h.leftOut(),
            h.leftOut() == 1 ? "" : "s",
            h.observedLeftOut(), h.observedLeftOut() == 1 ? "" : "s");
      }
      // Sparse: the χ² approximation fails, so the ratio test's p comes from a parametric bootstrap that carries
      // the reference's MC errors (Homogeneity.monteCarloP).
      double ratioMonteCarloP = Double.NaN;
      int testedValues = h.dof() + 1;
      boolean tooManySparse = h.sparse() && testedValues > MAX_BOOTSTRAP_VALUES;
      if (tooManySparse) {
        o.say("  sparse: median expected %.2g events per value (r·b) over %d values: too many values of few events "
            + "each for a calibrated observed/expected test (the χ² approximation fails, and the bootstrap's small "
            + "biases per value add up), so it is left out of the verdict; merging values%s gives one",
            h.medianExpected(), testedValues, column.kind() == ColumnKind.BLOCK && runColumn(m) != null
                ? " (e.g. --by " + runColumn(m) + ")" : "");
      } else if (h.sparse()) {
        ratioMonteCarloP = triage.core.inference.Homogeneity.monteCarloP(nObs, bExp, bVar, RATIO_TABLES,
            MONTE_CARLO_SEED);
        o.say("  sparse: median expected %.2g events per value (r·b), more than a fifth of them below 5 or some below "
            + "1: the χ² approximation does not hold; p = %.3g from %d Monte Carlo tables (seed %d; Poisson counts, "
            + "the reference's MC errors drawn too)%s", h.medianExpected(), ratioMonteCarloP, RATIO_TABLES,
            MONTE_CARLO_SEED, column.kind() == ColumnKind.BLOCK && runColumn(m) != null ? "; merging values (e.g. "
            + "--by " + runColumn(m) + ") gives more events per value" : "");
      }
      if (column.kind() == ColumnKind.BLOCK && runColumn(m) == null) {
        o.say("  note: the index has no run column, so blocks of the same number in different runs are counted as "
            + "one value");
      }
      List<String> worst = new ArrayList<>();
      rows.stream().filter(r -> pullOf.get(r.value()) > 3).sorted((a, b) -> Double.compare(pullOf.get(b.value()),
          pullOf.get(a.value()))).limit(5).forEach(r -> worst.add(r.value()));
      long used = rows.stream().filter(r -> r.observedAll() > 0).count();
      // Sparse tables (fewer than 5 selected, or not selected, events per value on average): the χ²
      // approximation fails, so
      // the share test's p-value comes from Monte Carlo tables with the margins fixed.
      boolean sparse = Math.min(totalN, totalAll - totalN) < 5 * used;
      double shareP = share.pearsonP();
      if (sparse) {
        shareP = SelectionShare.monteCarloP(nObs, nAll, MONTE_CARLO_TABLES, MONTE_CARLO_SEED);
        o.say("sparse table (%d selected over %d values): share p = %.3g from %d Monte Carlo tables (seed %d)",
            totalN, used, shareP, MONTE_CARLO_TABLES, MONTE_CARLO_SEED);
      }
      // whether the reference itself is thin: the median effective number of reference events b²/σ² per value
      double[] effective = rows.stream().filter(r -> r.expected() > 0 && r.expectedVariance() > 0)
          .mapToDouble(r -> r.expected() * r.expected() / r.expectedVariance()).sorted().toArray();
      boolean thinReference = effective.length == 0 || effective[effective.length / 2] < 5;
      String verdict = verdict(shareP, h.sparse() ? ratioMonteCarloP : p, h.sparse(), thinReference,
          h.observedLeftOut(), worst, by, tests);
      o.say("verdict    %s", verdict);
      Map<String, Object> result = new LinkedHashMap<>();
      if (column.kind() == ColumnKind.RUN && rows.size() > 1) {
        o.say("in run order (share selected; · is the overall share)");
        double overall = totalAll > 0 ? (double) totalN / totalAll : 0;
        double maxShare = rows.stream().filter(r -> r.observedAll() > 0).mapToDouble(r -> (double) r.observed()
            / r.observedAll()).max().orElse(0);
        int width = 30;
        List<Map<String, Object>> order = new ArrayList<>();
        for (int i = 0; i < rows.size(); i++) {
          Row r = rows.get(i);
          double f = r.observedAll() > 0 ? (double) r.observed() / r.observedAll() : Double.NaN;
          if (rows.size() <= 60) {
            o.say("  %-10s %8.4f %s", r.value(), f, bar(f, overall, maxShare, width));
          }
          Map<String, Object> e = new LinkedHashMap<>();
          e.put("run", r.value());
          e.put("share", f);
          e.put("sharePull", share.pulls()[i]);
          order.add(e);
        }
        if (rows.size() > 60) {
          o.say("  (%d runs: see --json for the share of each, in run order)", rows.size());
        }
        result.put("runOrder", order);
      }
      result.put("command", "breakdown");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("where", where);
      result.put("by", by);
      result.put("observed", totalN);
      result.put("observedAll", totalAll);
      result.put("expected", totalB);
      result.put("topThreeExcessFraction", excess != 0 ? top3 / excess : Double.NaN);
      result.put("shareChi2", share.pearson());
      result.put("shareG", share.g());
      result.put("shareDof", share.dof());
      result.put("shareP", share.pearsonP());
      result.put("shareGP", share.gP());
      result.put("sparse", sparse);
      result.put("shareMonteCarloP", sparse ? shareP : Double.NaN);
      result.put("shareMonteCarloTables", sparse ? MONTE_CARLO_TABLES : 0);
      result.put("shareMonteCarloSeed", MONTE_CARLO_SEED);
      result.put("homogeneityChi2", chi2);
      result.put("homogeneityDof", Math.max(0, k - 1));
      result.put("homogeneityP", p);
      result.put("homogeneitySparse", h.sparse());
      result.put("homogeneityMedianExpected", h.medianExpected());
      result.put("homogeneityMonteCarloP", ratioMonteCarloP);
      result.put("homogeneityMonteCarloTables", h.sparse() && !tooManySparse ? RATIO_TABLES : 0);
      result.put("homogeneityTooSparse", tooManySparse);
      result.put("homogeneityLeftOut", h.leftOut());
      result.put("homogeneityObservedLeftOut", h.observedLeftOut());
      result.put("keyedBy", keyedBy);
      result.put("concentratedIn", worst);
      result.put("verdict", verdict);
      result.put("verdictTests", tests);
      result.put("values", out);
      return result;
    }
  }

  /** Monte Carlo tables of the share test on sparse tables, and their seed. */
  static final int MONTE_CARLO_TABLES = 9999;
  static final long MONTE_CARLO_SEED = 1;
  /** Monte Carlo tables of the ratio test on sparse tables (each draws a count and a yield per value). */
  static final int RATIO_TABLES = 1999;
  /**
   * Values above which a sparse ratio test gets no p-value: the bootstrap's per-value biases add up (a review
   * measured P(p ≤ 0.05) = 0.055, 0.060, 0.087, 0.19 at 300, 1,000, 3,000, 20,000 values of 0.5 expected events).
   */
  static final int MAX_BOOTSTRAP_VALUES = 1000;

  /**
   * One line: whether the selection is concentrated in some values of the column. Concentrated when the share
   * test or the observed/expected test has p &lt; 0.001 (common practice, no source, for a flag meant to send the
   * analyst to look) after Bonferroni's correction for the breakdown's tests (two per column: the smaller p times
   * their number); the values with a share pull above 3 are named; somewhat uneven below 0.05, corrected the same
   * way (uncorrected, two tests at 0.05 said "somewhat uneven" for about one null column in ten, so for about a
   * quarter of null selections broken down by three columns: a review's estimate). "Spread evenly"
   * otherwise; observed events in values left out of the observed/expected test (no positive expectation) call for
   * a look, unless the reference itself is thin (a median below 5 effective events per value), where many values
   * hold none by chance.
   *
   * @param shareP the share test's p-value (Monte Carlo on sparse tables)
   * @param ratioP the observed/expected test's p-value (NaN when not computed; Monte Carlo on sparse tables)
   * @param monteCarlo whether that p-value comes from Monte Carlo tables
   * @param thinReference whether the reference has a median below 5 effective events per value
   * @param tests the number of tests of the breakdown (two per column), for Bonferroni's correction
   * @param observedLeftOut observed events in values left out of that test (no positive expectation)
   */
  static String verdict(double shareP, double ratioP, boolean monteCarlo, boolean thinReference,
      long observedLeftOut, List<String> worst, String by, int tests) {
    if (Double.isNaN(shareP)) {
      return "no test (fewer than two values with events, or nothing or everything selected)";
    }
    String ratio = Double.isNaN(ratioP) ? "" : ", observed/expected p " + pText(ratioP)
        + (monteCarlo ? " from Monte Carlo tables" : "");
    // Bonferroni over the breakdown's tests: compare the smaller p times their number with the thresholds
    double least = Math.min(shareP, Double.isNaN(ratioP) ? 1 : ratioP) * tests;
    if (least < 1e-3) {
      return "concentrated" + (worst.isEmpty() ? "" : " in " + by + " " + String.join(", ", worst))
          + ": look for a detector or data-taking cause (share p " + pText(shareP) + ratio + ")";
    }
    if (least < 0.05) {
      return "somewhat uneven (share p " + pText(shareP) + ratio + ")"
          + (worst.isEmpty() ? "" : ", most in " + by + " " + String.join(", ", worst)) + ": look closer";
    }
    if (observedLeftOut > 0 && !thinReference) {
      return "share spread evenly (share p " + pText(shareP) + ratio + "), but " + observedLeftOut + " observed "
          + "event" + (observedLeftOut == 1 ? " lies" : "s lie") + " in values with no positive expectation, "
          + "outside the observed/expected test: look at them";
    }
    // where the reference has few events per value, many values hold none by chance
    return "spread evenly (share p " + pText(shareP) + ratio + "), as a real effect would be" + (observedLeftOut > 0
        ? "; " + observedLeftOut + " observed event" + (observedLeftOut == 1 ? " lies" : "s lie") + " in values with "
        + "no positive expectation, as is usual when the reference has few events per value" : "");
  }

  /** A value of the column: a number, or (run, block) for blocks, which are numbered within their run. */
  private record Key(long run, long value, boolean withRun) implements Comparable<Key> {
    static Key of(double[] runs, double[] values, int i) {
      return new Key(runs == null ? 0 : (long) runs[i], (long) values[i], runs != null);
    }

    @Override
    public int compareTo(Key o) {
      int c = Long.compare(run, o.run);
      return c != 0 ? c : Long.compare(value, o.value);
    }

    @Override
    public String toString() {
      return withRun ? run + ":" + value : String.valueOf(value);
    }
  }

  /** The index's run column, or null. */
  private static String runColumn(Manifest m) {
    return m.columns().stream().filter(c -> c.kind() == ColumnKind.RUN).map(Manifest.Column::name).findFirst()
        .orElse(null);
  }

  /** "= 0.0012", or "< 1e-16" where the double's tail has no digits left. */
  static String pText(double p) {
    return p < 1e-16 ? "< 1e-16" : "= " + String.format(java.util.Locale.ROOT, "%.2g", p);
  }

  private static String bar(double f, double overall, double max, int width) {
    if (Double.isNaN(f) || !(max > 0)) {
      return "";
    }
    int n = (int) Math.round(f / max * width);
    int mark = (int) Math.round(overall / max * width);
    StringBuilder b = new StringBuilder();
    for (int i = 0; i < Math.max(n, mark + 1); i++) {
      b.append(i == mark ? (i < n ? '┼' : '·') : i < n ? '█' : ' ');
    }
    return b.toString().stripTrailing();
  }
}
