package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.inference.CountingSignificance;
import triage.core.provenance.ToolVersion;
import triage.core.ranking.FeatureRanking;
import triage.core.region.Prim;
import triage.core.region.WindowScan;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;
import triage.index.Selection;

/** {@code triage derive}: a simple region from the data: a score threshold or a PRIM box. */
@Command(name = "derive", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Derive a simple region: --method score takes f > c with c chosen by the largest local Z_Bi over "
        + "the observed score quantiles; --method box runs PRIM (peeling, pasting, pruning) on the top-ranked "
        + "features and prints a few readable cuts with each cut's effect; --method window scans one feature for "
        + "the interval of contiguous bins with the largest local Z_Bi and states how many windows were tried. The region's significance is optimised "
        + "on these data (biased upwards): freeze it with triage region and check it with triage followup.",
        "In the console, --name NAME keeps the result as a named selection."},
    footer = ExitCodes.FOOTER)
public final class DeriveCommand implements Callable<Integer> {
  /** The last condition derived in this JVM, for the console's --name. */
  static volatile String lastCondition;

  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Method. */
  @Option(names = "--method", defaultValue = "box", paramLabel = "box|score|window",
      description = "box (PRIM, default), score (threshold on a model's score) or window (sliding-window scan of "
          + "one feature).")
  String method;

  /** Window scan range. */
  @Option(names = "--range", paramLabel = "LO:HI",
      description = "For --method window: the scanned range of the feature (default: the observed minimum to "
          + "maximum inside --where).")
  String range;

  /** Window scan bins. */
  @Option(names = "--bins", defaultValue = "50", paramLabel = "N",
      description = "For --method window: equal bins in the range (default: ${DEFAULT-VALUE}).")
  int bins;

  /** Window widths. */
  @Option(names = "--widths", defaultValue = "1:5", paramLabel = "MIN:MAX",
      description = "For --method window: window widths tried, in bins (default: ${DEFAULT-VALUE}).")
  String widths;

  /** Base selection. */
  @Option(names = "--where", paramLabel = "CONDITION", description = "Search inside this selection only.")
  String where;

  /** Features. */
  @Option(names = "--features", split = ",", paramLabel = "COL,...",
      description = "Features PRIM may cut on (default: the --top-features best by KS distance); for --method "
          + "window, the one feature scanned.")
  List<String> features;

  /** Top features. */
  @Option(names = "--top-features", defaultValue = "4", paramLabel = "N",
      description = "How many top-ranked features PRIM uses (default: ${DEFAULT-VALUE}).")
  int topFeatures;

  /** Max cuts. */
  @Option(names = "--max-cuts", defaultValue = "4", paramLabel = "K", description = "Most cuts kept (default: ${DEFAULT-VALUE}).")
  int maxCuts;

  /** Alpha. */
  @Option(names = "--alpha", defaultValue = "0.05", paramLabel = "A", description = "Peeling fraction (default: ${DEFAULT-VALUE}).")
  double alpha;

  /** Model. */
  @Option(names = "--model", paramLabel = "VERSION", description = "Model version for --method score (default: latest).")
  String model;

  /** Name for the console. */
  @Option(names = "--name", paramLabel = "NAME", description = "In the console: keep the result as $NAME.")
  String name;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    if (topFeatures < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--top-features must be at least 1");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      Selection base = where == null ? Selection.all() : store.where(where);
      // every method needs observed events to shape a region on
      if (where != null && sums(store, m, where)[0].count() == 0) {
        throw new InputException(index, "no observed event passes --where \"" + where + "\": nothing to derive "
            + "a region from");
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "derive");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("method", method);
      result.put("where", where);
      String condition;
      if (method.equals("score")) {
        String column = model != null ? "score:" + model
            : EventsCommand.latestScore(m, "fit a model first (triage fit)");
        double[] f = store.columns(observed, List.of(column))[0].clone();
        java.util.Arrays.sort(f);
        double bestZ = Double.NEGATIVE_INFINITY;
        double bestC = Double.NaN;
        for (int k = 0; k < 40; k++) {
          double c = f[Math.min(f.length - 1, (int) ((0.5 + 0.4975 * k / 39) * f.length))];
          SampleSums[] nb = sums(store, m, and(where, column + " > " + c));
          double z = zOf(nb);
          if (z > bestZ) {
            bestZ = z;
            bestC = c;
          }
        }
        condition = and(where, column + " > " + bestC);
        result.put("threshold", bestC);
      } else if (method.equals("box")) {
        List<String> use = features;
        List<String> all = m.spec().columns().features();
        if (use == null) {
          double[][] obsAll = store.rows(observed, all, base).columns();
          EventStore.SelectedRows refRows = store.rows(reference, all, base);
          double[][] refAll = refRows.columns();
          double[] wAll = refRows.weights();
          List<FeatureRanking.Row> ranked = FeatureRanking.rank(all, obsAll, refAll, wAll, 0, 1);
          use = ranked.subList(0, Math.min(topFeatures, ranked.size())).stream().map(FeatureRanking.Row::feature)
              .toList();
        }
        for (String f : use) {
          if (!all.contains(f)) {
            throw new InputException(index, "has no feature '" + f + "' (features: " + String.join(", ", all) + ")");
          }
        }
        double[][] obs = store.rows(observed, use, base).columns();
        EventStore.SelectedRows kept = store.rows(reference, use, base);
        double[][] ref = kept.columns();
        double[] w = kept.weights();
        Prim.Settings settings;
        try {
          settings = new Prim.Settings(alpha, 0.002, 10, 0.25, maxCuts);
        } catch (IllegalArgumentException e) {
          throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
        }
        Prim.Result box = Prim.find(obs, ref, w, settings);
        List<String> cuts = new ArrayList<>();
        List<Map<String, Object>> effects = new ArrayList<>();
        o.say("PRIM on %s (%d peels, α = %s): %d cuts", use, box.peels(), alpha, box.cuts().size());
        o.say("  %-34s %24s", "cut", "without it: observed, expected, Z");
        for (Prim.Cut c : box.cuts()) {
          String f = use.get(c.feature());
          String text = c.lo() == Double.NEGATIVE_INFINITY ? f + " <= " + c.hi()
              : c.hi() == Double.POSITIVE_INFINITY ? f + " >= " + c.lo()
              : f + " BETWEEN " + c.lo() + " AND " + c.hi();
          cuts.add(text);
          o.say("  %-34s %10d %10.4g %6.2f", shorten(text), c.observedWithout(), c.expectedWithout(), c.zWithout());
          Map<String, Object> e = new LinkedHashMap<>();
          e.put("cut", text);
          e.put("observedWithout", c.observedWithout());
          e.put("expectedWithout", c.expectedWithout());
          e.put("zWithout", c.zWithout());
          effects.add(e);
        }
        condition = and(where, cuts.isEmpty() ? "1 = 1" : String.join(" AND ", cuts));
        result.put("features", use);
        result.put("cuts", effects);
      } else if (method.equals("window")) {
        condition = window(store, m, base, observed, reference, o, result);
      } else {
        throw new CommandLine.ParameterException(spec.commandLine(), "--method must be box, score or window");
      }
      SampleSums[] nb = sums(store, m, condition);
      double z = zOf(nb);
      o.say("region     %s", condition);
      o.say("yields     observed %d, expected %.4g ± %.2g, excess %+.4g, local Z_Bi = %.2f (optimised on these "
          + "data: biased upwards)", nb[0].count(), nb[1].sumOfWeights(), nb[1].statisticalError(),
          nb[0].count() - nb[1].sumOfWeights(), z);
      o.say("next       triage region --where \"%s\" --out REGION.json, then triage followup on independent data",
          condition);
      lastCondition = condition;
      result.put("condition", condition);
      result.put("observed", nb[0].count());
      result.put("expected", nb[1].sumOfWeights());
      result.put("expectedStatError", nb[1].statisticalError());
      result.put("localZBi", z);
      result.put("optimisedOnTheseData", true);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  private String window(EventStore store, Manifest m, Selection base, String observed, String reference, Output o,
      Map<String, Object> result) throws java.io.IOException {
    List<String> all = m.spec().columns().features();
    if (features == null || features.size() != 1) {
      throw new CommandLine.ParameterException(spec.commandLine(),
          "--method window scans one feature: give --features COL (features: " + String.join(", ", all) + ")");
    }
    String f = features.get(0);
    if (!all.contains(f)) {
      throw new InputException(index, "has no feature '" + f + "' (features: " + String.join(", ", all) + ")");
    }
    double[] obs = store.rows(observed, List.of(f), base).columns()[0];
    EventStore.SelectedRows kept = store.rows(reference, List.of(f), base);
    double[] ref = kept.columns()[0];
    double[] w = kept.weights();
    if (obs.length == 0) {
      throw new InputException(index, "has no observed events inside --where, so there is nothing to scan");
    }
    double lo;
    double hi;
    if (range == null) {
      lo = java.util.Arrays.stream(obs).min().getAsDouble();
      hi = java.util.Arrays.stream(obs).max().getAsDouble();
    } else {
      double[] r = pair(range, "--range", "LO:HI");
      lo = r[0];
      hi = r[1];
    }
    double[] wd = pair(widths, "--widths", "MIN:MAX");
    WindowScan.Grid grid;
    try {
      grid = new WindowScan.Grid(lo, hi, bins, (int) wd[0], (int) wd[1]);
    } catch (IllegalArgumentException e) {
      throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
    }
    WindowScan.Result scan;
    try {
      scan = WindowScan.scan(obs, ref, w, grid, 5);
    } catch (IllegalArgumentException e) {
      throw new InputException(index, e.getMessage());
    }
    o.say("window scan of %s over [%s, %s] in %d bins, widths %d to %d bins: %d windows tried", f, plain(lo),
        plain(hi), bins, grid.minBins(), grid.maxBins(), scan.windowsTried());
    o.say("  %-28s %9s %11s %9s %8s", "window", "observed", "expected", "± stat", "local Z");
    List<Map<String, Object>> top = new ArrayList<>();
    for (WindowScan.Window x : scan.top()) {
      o.say("  %-28s %9d %11.4g %9.2g %8.2f", "[" + plain(x.lo()) + ", " + plain(x.hi()) + "]", x.observed(),
          x.expected(), x.expectedError(), x.localZ());
      Map<String, Object> e = new LinkedHashMap<>();
      e.put("lo", x.lo());
      e.put("hi", x.hi());
      e.put("observed", x.observed());
      e.put("expected", x.expected());
      e.put("expectedStatError", x.expectedError());
      e.put("localP", x.localP());
      e.put("localZ", x.localZ());
      top.add(e);
    }
    o.say("look-elsewhere: best local Z %.2f; Bonferroni over %d windows gives global p ≤ %.3g (Z ≥ %.2f), "
        + "conservative since neighbouring windows overlap; calibrate the global figure with pseudo-experiments",
        scan.best().localZ(), scan.windowsTried(), scan.bonferroniP(), scan.bonferroniZ());
    if (scan.outsideRange() > 0) {
      o.say("note: %d observed events lie outside the scanned range (not scanned)", scan.outsideRange());
    }
    if (scan.observedWithoutReference() > 0) {
      o.say("note: %d observed events lie in bins without reference events (no expectation; windows of only "
          + "such bins are not tried)", scan.observedWithoutReference());
    }
    result.put("feature", f);
    result.put("range", List.of(lo, hi));
    result.put("bins", bins);
    result.put("widths", List.of(grid.minBins(), grid.maxBins()));
    result.put("windowsTried", scan.windowsTried());
    result.put("windows", top);
    result.put("bonferroniGlobalP", scan.bonferroniP());
    result.put("bonferroniGlobalZ", scan.bonferroniZ());
    result.put("observedOutsideRange", scan.outsideRange());
    result.put("observedWithoutReference", scan.observedWithoutReference());
    return and(where, f + " BETWEEN " + plain(scan.best().lo()) + " AND " + plain(scan.best().hi()));
  }

  private double[] pair(String text, String option, String shape) {
    String[] parts = text.split(":", -1);
    try {
      if (parts.length == 2) {
        return new double[] {Double.parseDouble(parts[0].trim()), Double.parseDouble(parts[1].trim())};
      }
    } catch (NumberFormatException e) {
      // reported below
    }
    throw new CommandLine.ParameterException(spec.commandLine(), option + " expects " + shape + ", got '" + text
        + "'");
  }

  private static String shorten(String s) {
    return s.length() > 34 ? s.substring(0, 33) + "…" : s;
  }

  private static String and(String base, String more) {
    return base == null ? more : "(" + base + ") AND " + more;
  }

  private static SampleSums[] sums(EventStore store, Manifest m, String condition) throws java.io.IOException {
    List<SampleSums> s = store.sums(store.where(condition));
    return new SampleSums[] {s.get(Roles.ordinal(m, Role.OBSERVED)), s.get(Roles.ordinal(m, Role.REFERENCE))};
  }

  private static double zOf(SampleSums[] nb) {
    return nb[1].sumOfWeights() > 0 && nb[1].statisticalError() > 0 ? CountingSignificance.zBiFromBackground(
        nb[0].count(), nb[1].sumOfWeights(), nb[1].statisticalError()).z() : Double.NEGATIVE_INFINITY;
  }

  /** Up to six significant digits, without trailing zeros (700, 712.5). */
  static String plain(double v) {
    return new java.math.BigDecimal(format(v).trim()).stripTrailingZeros().toPlainString();
  }

  static String format(double v) {
    return String.format(Locale.ROOT, "%.6g", v);
  }
}
