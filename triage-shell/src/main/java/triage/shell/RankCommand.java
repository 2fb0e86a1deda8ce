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
import triage.core.provenance.ToolVersion;
import triage.core.ranking.FeatureRanking;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.Selection;

/** {@code triage rank}: which features set the selected observed events apart from the reference. */
@Command(name = "rank", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Rank the features by how much the selected observed events differ from the reference: "
        + "(a) all reference events, where the selection lives; (b) reference events inside the same selection, "
        + "what the selection still does not explain.",
        "Measures: weighted KS distance, |AUC - 0.5|, Wasserstein-1 in reference standard deviations, binned "
            + "Jensen-Shannon divergence, and resampling p-values of the KS distance with the maxT adjustment "
            + "across features: label permutations when all reference weights are equal, else null samples drawn "
            + "from the weighted reference (n events with probability proportional to weight; the rest, weighted "
            + "w/(1 - pi), as their reference)."},
    footer = ExitCodes.FOOTER)
public final class RankCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** The condition. */
  @Option(names = "--where", required = true, paramLabel = "CONDITION",
      description = "The selection, in SQL WHERE syntax.")
  String where;

  /** Which comparison. */
  @Option(names = "--versus", defaultValue = "both", paramLabel = "all|inside|both",
      description = "Compare with all reference events, those inside the selection, or both (default).")
  Versus versus;

  /** Permutations. */
  @Option(names = "--permutations", defaultValue = "200", paramLabel = "B",
      description = "Permutations (or null draws, for unequal reference weights) for the p-values of the "
          + "comparison inside the selection (default: "
          + "${DEFAULT-VALUE}; 0 for none). Against all reference events the selection's own cuts make such "
          + "p-values trivially small, so only the asymptotic KS p-value is given there.")
  int permutations;

  /** Seed. */
  @Option(names = "--seed", defaultValue = "20261202", paramLabel = "N",
      description = "Seed of the permutations (default: ${DEFAULT-VALUE}).")
  long seed;

  /** Pairs shown. */
  @Option(names = "--pairs", defaultValue = "5", paramLabel = "N",
      description = "Feature pairs shown under each table, largest 2D Jensen-Shannon divergence first, with how "
          + "much the pair shows beyond its two features alone (default: ${DEFAULT-VALUE}; 0 for none).")
  int pairs;

  /** Bins per feature for the pairs. */
  @Option(names = "--pair-bins", defaultValue = "6", paramLabel = "N",
      description = "Reference-quantile bins per feature for the pairs (default: ${DEFAULT-VALUE}).")
  int pairBins;

  /** Sort order. */
  @Option(names = "--sort", defaultValue = "ks", paramLabel = "ks|auc|w1|js|p",
      description = "Sort the tables by KS distance, |AUC-0.5|, W1, JS (largest first) or by adjusted p "
          + "(smallest first) (default: ${DEFAULT-VALUE}).")
  SortKey sort;

  /** Sort keys. */
  enum SortKey {
    /** KS distance. */
    ks,
    /** |AUC − 0.5|. */
    auc,
    /** Wasserstein-1. */
    w1,
    /** Jensen–Shannon. */
    js,
    /** Adjusted resampling p-value. */
    p
  }

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** Comparison choices. */
  enum Versus {
    /** All reference events. */
    all,
    /** Reference events inside the selection. */
    inside,
    /** Both. */
    both
  }

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    if (permutations < 0) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--permutations must be 0 or more");
    }
    if (pairs < 0 || pairBins < 2) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--pairs must be 0 or more and --pair-bins 2 or "
          + "more");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      List<String> features = m.spec().columns().features();
      Selection selection = store.where(where);
      double[][] obs = store.rows(observed, features, selection).columns();
      int kept = obs[0].length;
      if (kept < 2) {
        throw new triage.core.sample.InputException(null, "the selection keeps " + kept
            + " observed events; ranking needs at least 2");
      }
      // Every reference event only for the comparison with all of them; the inside comparison reads the kept ones.
      double[][] refAll = versus != Versus.inside ? store.columns(reference, features) : null;
      double[] wAll = versus != Versus.inside ? store.weights(reference) : null;
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "rank");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("where", where);
      result.put("observedEvents", kept);
      result.put("permutations", permutations);
      result.put("seed", seed);
      o.say("selection  %s: %d observed events", where, kept);
      if (versus != Versus.inside) {
        List<FeatureRanking.Row> rows = sorted(FeatureRanking.rank(features, obs, refAll, wAll, 0, seed));
        print(o, "versus all reference events (" + wAll.length + "): where the selection lives", rows);
        result.put("versusAll", rows);
        result.put("pairsVersusAll", pairs(o, features, obs, refAll, wAll));
      }
      if (versus != Versus.all) {
        EventStore.SelectedRows inside = store.rows(reference, features, selection);
        int refKept = inside.weights().length;
        double insideSum = triage.core.stats.NeumaierSum.of(inside.weights());
        if (refKept < 2) {
          o.say("versus reference inside the selection: only %d reference events, skipped", refKept);
          result.put("versusInside", null);
        } else if (!(insideSum > 0)) {
          o.say("versus reference inside the selection: its %d reference events' weights sum to %.4g (negative "
              + "weights), not a positive yield: no distribution to compare with, skipped", refKept, insideSum);
          result.put("versusInside", null);
        } else {
          double[][] refIn = inside.columns();
          double[] wIn = inside.weights();
          List<FeatureRanking.Row> rows = sorted(FeatureRanking.rank(features, obs, refIn, wIn, permutations,
              seed));
          print(o, "versus reference inside the selection (" + refKept
              + "): what the selection does not explain", rows);
          result.put("versusInside", rows);
          result.put("pairsVersusInside", pairs(o, features, obs, refIn, wIn));
        }
      }
      Manifest.Model latest = null;
      for (Manifest.Model mm : m.models()) {
        if (mm.modelFile() != null) {
          latest = mm;
        }
      }
      if (latest != null) {
        triage.core.ratio.RatioModel model = ModelFiles.load(index, latest);
        if (model.featureNames().equals(features)) {
          int n = obs[0].length;
          double[] g = model.gradientAll(FitCommand.featureMajor(obs), n, Runtime.getRuntime().availableProcessors());
          Map<String, Double> attribution = new LinkedHashMap<>();
          o.say("");
          o.say("model %s attribution: mean |∂f/∂x|·σ_ref over the selected observed events (what the model leans on)",
              latest.version());
          for (int k = 0; k < features.size(); k++) {
            double sum = 0;
            for (int i = 0; i < n; i++) {
              sum += Math.abs(g[k * n + i]);
            }
            double value = sum / n * m.sample(reference).featureSds().get(features.get(k));
            attribution.put(features.get(k), value);
          }
          attribution.entrySet().stream().sorted((a, b) -> Double.compare(b.getValue(), a.getValue()))
              .forEach(e -> o.say("  %-14s %10.4g", e.getKey(), e.getValue()));
          result.put("attributionModel", latest.version());
          result.put("attribution", attribution);
        }
      }
      o.say("note: 'p raw' is the resampling p-value of the KS distance, (k+1)/(B+1) (label permutations when the "
          + "reference weights are all equal, else null samples drawn from the weighted reference; '-' when the "
          + "weights differ and the reference inside has fewer than twice the observed events, or its weight sits in "
          + "too few events for such draws), and 'p adj' the same "
          + "adjusted for the %d features (maxT); 'KS p asym' uses effective sample sizes and is a guide only. "
          + "All are local to this selection.%s", features.size(), versus != Versus.inside
          ? " The comparison with all reference events has no resampling p-values by design: the selection's own "
          + "cuts make its events differ there, so only the distances (and the asymptotic p as a guide) rank the "
          + "features." : "");
      o.result(result);
    }
    return ExitCodes.OK;
  }

  private List<FeatureRanking.Row> sorted(List<FeatureRanking.Row> rows) {
    java.util.Comparator<FeatureRanking.Row> by = switch (sort) {
      case ks -> java.util.Comparator.comparingDouble(FeatureRanking.Row::ks).reversed();
      case auc -> java.util.Comparator.comparingDouble(FeatureRanking.Row::aucSeparation).reversed();
      case w1 -> java.util.Comparator.comparingDouble(FeatureRanking.Row::wasserstein).reversed();
      case js -> java.util.Comparator.comparingDouble(FeatureRanking.Row::jensenShannon).reversed();
      case p -> java.util.Comparator.comparingDouble((FeatureRanking.Row r) -> Double.isNaN(r.adjustedP()) ? 2
          : r.adjustedP());
    };
    return rows.stream().sorted(by).toList();
  }

  /** The top pairs, printed; all of them for JSON. */
  private List<triage.core.ranking.FeaturePairs.Pair> pairs(Output o, List<String> features, double[][] obs,
      double[][] ref, double[] w) {
    if (pairs == 0 || features.size() < 2) {
      return List.of();
    }
    List<triage.core.ranking.FeaturePairs.Pair> all = triage.core.ranking.FeaturePairs.rank(features, obs, ref, w,
        pairBins);
    o.say("  top pairs in 2D (%d×%d reference-quantile bins)   JS (nats)  beyond the better feature alone", pairBins,
        pairBins);
    for (triage.core.ranking.FeaturePairs.Pair p : all.subList(0, Math.min(pairs, all.size()))) {
      if (Double.isNaN(p.jensenShannon())) {
        o.say("    %-28s %10s %10s", p.first() + " × " + p.second(), "-", "-");
      } else {
        o.say("    %-28s %10.5f %+10.5f", p.first() + " × " + p.second(), p.jensenShannon(), p.beyondMarginals());
      }
    }
    int unmeasured = triage.core.ranking.FeaturePairs.unmeasured(all);
    if (unmeasured > 0) {
      o.say("  note: %d of %d pairs not measured ('-', listed last): a 2D cell's reference weights sum below zero "
          + "(negative weights), where a divergence is undefined; fewer --pair-bins make larger cells", unmeasured,
          all.size());
    }
    return all;
  }

  private static void print(Output o, String title, List<FeatureRanking.Row> rows) {
    o.say("");
    o.say("%s", title);
    o.say("  %-14s %8s %10s %8s %10s %9s %8s %8s", "feature", "KS D", "|AUC-0.5|", "W1/sd", "JS (nats)", "KS p asym",
        "p raw", "p adj");
    for (FeatureRanking.Row r : rows) {
      o.say("  %-14s %8.4f %10.4f %8.4f %10s %9s %8s %8s", r.feature(), r.ks(), r.aucSeparation(),
          r.wasserstein(),
          Double.isNaN(r.jensenShannon()) ? "-" : String.format(java.util.Locale.ROOT, "%.5f", r.jensenShannon()),
          Output.p(r.ksAsymptoticP()), p(r.rawP()), p(r.adjustedP()));
      if (Double.isNaN(r.jensenShannon())) {
        o.say("    (%s: JS '-': a quantile bin's reference weights sum below zero, where a divergence is undefined)",
            r.feature());
      }
    }
  }

  /** A p-value in three digits, or '-' when not computed. */
  private static String p(double value) {
    return Double.isNaN(value) ? "-" : Output.p(value);
  }
}
