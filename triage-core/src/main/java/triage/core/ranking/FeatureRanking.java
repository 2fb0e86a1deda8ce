package triage.core.ranking;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;

/**
 * Ranks features by how much selected observed events differ from a weighted reference, with several measures
 * side by side and permutation p-values adjusted for the number of features (Westfall–Young maxT on the
 * Kolmogorov–Smirnov distance, so the top of the list is not merely the luckiest of many).
 *
 * <ul>
 *   <li>{@code ks}: weighted two-sample Kolmogorov–Smirnov distance D, and its asymptotic p-value with effective
 *   sample sizes;</li>
 *   <li>{@code aucSeparation}: |AUC − 0.5| of the weighted ROC curve (0 when the feature does not separate);</li>
 *   <li>{@code wasserstein}: Wasserstein-1 distance in units of the reference's weighted standard deviation;</li>
 *   <li>{@code jensenShannon}: binned Jensen–Shannon divergence (nats), bins from reference quantiles;</li>
 *   <li>{@code rawP}, {@code adjustedP}: permutation p-values of D, (k + 1)/(B + 1), raw and maxT-adjusted
 *   (NaN when no permutations were asked for).</li>
 * </ul>
 */
public final class FeatureRanking {
  /**
   * One feature's line in the ranking.
   *
   * @param feature the feature
   * @param ks the weighted KS distance
   * @param ksAsymptoticP its asymptotic p-value (effective sizes; a guide, not calibrated for weights)
   * @param aucSeparation |AUC − 0.5|
   * @param wasserstein W1 in reference standard deviations
   * @param jensenShannon binned JS divergence, nats
   * @param rawP permutation p-value of D for this feature alone
   * @param adjustedP maxT-adjusted permutation p-value
   */
  public record Row(String feature, double ks, double ksAsymptoticP, double aucSeparation, double wasserstein,
      double jensenShannon, double rawP, double adjustedP) {}

  private FeatureRanking() {
    // no instance
  }

  /**
   * Ranks features, largest KS distance first.
   *
   * @param names feature names
   * @param observed observed values, {@code observed[f][i]} (weights one)
   * @param reference reference values, {@code reference[f][j]}
   * @param referenceWeights reference weights
   * @param permutations label permutations for the p-values (0 for none)
   * @param seed the permutations' seed
   */
  public static List<Row> rank(List<String> names, double[][] observed, double[][] reference,
      double[] referenceWeights, int permutations, long seed) {
    int nf = names.size();
    if (observed.length != nf || reference.length != nf) {
      throw new IllegalArgumentException("need " + nf + " feature columns on both sides");
    }
    WeightedKolmogorovSmirnovTest ks = WeightedKolmogorovSmirnovTest.withDefaults()
        .with(NegativeWeights.ALLOW);
    WeightedWasserstein w1 = WeightedWasserstein.withDefaults().with(WeightedWasserstein.Units.REFERENCE_STANDARD_DEVIATION)
        .with(NegativeWeights.ALLOW);
    BinnedJensenShannon js = BinnedJensenShannon.withDefaults().with(NegativeWeights.ALLOW);
    double[] rawP = new double[nf];
    double[] adjP = new double[nf];
    java.util.Arrays.fill(rawP, Double.NaN);
    java.util.Arrays.fill(adjP, Double.NaN);
    if (permutations > 0) {
      int n = observed[0].length + reference[0].length;
      double[][] pooled = new double[nf][n];
      double[] weights = new double[n];
      boolean[] isObserved = new boolean[n];
      int no = observed[0].length;
      for (int f = 0; f < nf; f++) {
        System.arraycopy(observed[f], 0, pooled[f], 0, no);
        System.arraycopy(reference[f], 0, pooled[f], no, reference[f].length);
      }
      java.util.Arrays.fill(weights, 0, no, 1.0);
      System.arraycopy(referenceWeights, 0, weights, no, referenceWeights.length);
      java.util.Arrays.fill(isObserved, 0, no, true);
      MaxTPermutationTest.Result r = MaxTPermutationTest.withDefaults().withPermutations(permutations)
          .withSeed(seed).testKolmogorovSmirnov(pooled, weights, isObserved,
              Runtime.getRuntime().availableProcessors());
      rawP = r.rawPValues();
      adjP = r.adjustedPValues();
    }
    double[] ones = new double[observed[0].length];
    java.util.Arrays.fill(ones, 1.0);
    // Features are independent: computed in parallel, collected in feature order.
    final double[] raw = rawP;
    final double[] adj = adjP;
    // Each feature's two samples are sorted once and shared by the four measures (the same values as
    // calling each measure's public method, which sorts its own copy).
    List<Row> rows = new ArrayList<>(java.util.stream.IntStream.range(0, nf).parallel().mapToObj(f -> {
      WeightedSample a = WeightedSample.of("observed", observed[f], ones, NegativeWeights.ALLOW);
      WeightedSample b = WeightedSample.of("reference", reference[f], referenceWeights, NegativeWeights.ALLOW);
      var k = ks.test(a, b);
      return new Row(names.get(f), k.statistic(), k.pValue(), WeightedRocAuc.separation(a, b),
          w1.statistic(a, b), js.statistic(a, b), raw[f], adj[f]);
    }).toList());
    rows.sort(Comparator.comparingDouble(Row::ks).reversed());
    return rows;
  }
}
