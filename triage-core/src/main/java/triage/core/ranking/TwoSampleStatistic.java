package triage.core.ranking;

/**
 * A two-sample statistic of an observed sample x (weights wx) and a reference sample y (weights wy); null weights
 * mean unit weights. Larger values must mean "more different" when used by {@link MaxTPermutationTest}.
 * The distance classes of this package provide it as a method reference, e.g.
 * {@code WeightedKolmogorovSmirnovTest.withDefaults()::statistic}.
 */
@FunctionalInterface
public interface TwoSampleStatistic {
  /**
   * @param x observed values
   * @param wx observed weights or null
   * @param y reference values
   * @param wy reference weights or null
   * @return the statistic
   */
  double compute(double[] x, double[] wx, double[] y, double[] wy);
}
