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
 *   <li>{@code jensenShannon}: binned Jensen–Shannon divergence (nats), bins from reference quantiles; NaN when
 *   a bin's reference weights sum below zero (negative weights), where the divergence is undefined;</li>
 *   <li>{@code rawP}, {@code adjustedP}: resampling p-values of D, (k + 1)/(B + 1), raw and maxT-adjusted: a
 *   permutation test of the pooled events when all reference weights are equal, else B null draws from the
 *   weighted reference ({@link ReferenceDrawTest}); NaN when no resampling was asked for, or when the weights
 *   differ and the reference has fewer than twice as many events of non-zero weight as the observed side, or its
 *   weight is too concentrated in a few events for null draws (see {@link ReferenceDrawTest}).</li>
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
   * @param permutations permutations or null draws for the p-values (0 for none)
   * @param seed their seed
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
    double[] ones = new double[observed[0].length];
    java.util.Arrays.fill(ones, 1.0);
    // Features are independent: computed in parallel, collected in feature order. Each feature's two samples are
    // sorted once and shared by the four measures (the same values as calling each measure's public method, which
    // sorts its own copy).
    List<Row> rows = new ArrayList<>(java.util.stream.IntStream.range(0, nf).parallel().mapToObj(f -> {
      WeightedSample a = WeightedSample.of("observed", observed[f], ones, NegativeWeights.ALLOW);
      WeightedSample b = WeightedSample.of("reference", reference[f], referenceWeights, NegativeWeights.ALLOW);
      var k = ks.test(a, b);
      return new Row(names.get(f), k.statistic(), k.pValue(), WeightedRocAuc.separation(a, b),
          w1.statistic(a, b), js.statisticOrNaN(a, b), Double.NaN, Double.NaN);
    }).toList());
    if (permutations > 0) {
      MaxTPermutationTest.Result r = nullTest(rows, observed, reference, referenceWeights, permutations, seed);
      if (r != null) {
        for (int f = 0; f < nf; f++) {
          Row x = rows.get(f);
          rows.set(f, new Row(x.feature(), x.ks(), x.ksAsymptoticP(), x.aucSeparation(), x.wasserstein(),
              x.jensenShannon(), r.rawPValues()[f], r.adjustedPValues()[f]));
        }
      }
    }
    rows.sort(Comparator.comparingDouble(Row::ks).reversed());
    return rows;
  }

  /**
   * The p-values of the KS distances: a permutation test of the pooled events when every reference event has the
   * same weight (then the weighted distance is the unweighted one and relabelling is exact), else null draws from
   * the reference ({@link ReferenceDrawTest}) when it has at least twice as many events as the observed side; null
   * (no p-values) otherwise.
   */
  private static MaxTPermutationTest.Result nullTest(List<Row> rows, double[][] observed, double[][] reference,
      double[] referenceWeights, int permutations, long seed) {
    int nf = rows.size();
    int no = observed[0].length;
    int nr = reference[0].length;
    boolean equal = nr > 0 && referenceWeights[0] > 0;
    for (int j = 1; j < nr && equal; j++) {
      equal = referenceWeights[j] == referenceWeights[0];
    }
    if (equal) {
      int n = no + nr;
      double[][] pooled = new double[nf][n];
      boolean[] isObserved = new boolean[n];
      for (int f = 0; f < nf; f++) {
        System.arraycopy(observed[f], 0, pooled[f], 0, no);
        System.arraycopy(reference[f], 0, pooled[f], no, nr);
      }
      java.util.Arrays.fill(isObserved, 0, no, true);
      return MaxTPermutationTest.withDefaults().withPermutations(permutations).withSeed(seed)
          .testKolmogorovSmirnov(pooled, null, isObserved, Runtime.getRuntime().availableProcessors());
    }
    int usable = 0;
    for (double w : referenceWeights) {
      usable += w != 0 ? 1 : 0;
    }
    if (2L * no > usable) {
      return null;
    }
    double[] d = new double[nf];
    for (int f = 0; f < nf; f++) {
      d[f] = rows.get(f).ks();
    }
    return ReferenceDrawTest.test(d, reference, referenceWeights, no, permutations, seed);
  }
}
