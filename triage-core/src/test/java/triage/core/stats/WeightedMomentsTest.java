package triage.core.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.SplittableRandom;
import java.util.stream.Stream;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;
import org.junit.jupiter.api.Test;

/** Checks {@link WeightedMoments} against the StRD univariate reference sets and analytic identities. */
class WeightedMomentsTest {

  /**
   * Statistical Reference Datasets (StRD), "Univariate Summary Statistics", sets NumAcc1–NumAcc4 (constructed
   * data after "Assessing the accuracy of ANOVA calculations in statistical software", Comput. Stat. Data Anal. 8
   * (1989) 325–332): the data rule, the
   * certified mean and the certified standard deviation (denominator n − 1), all exact. The tolerance is relative:
   * 1e-12 where the inputs are exactly representable or the set is easy, 1e-7 on NumAcc3 and NumAcc4, whose decimal
   * inputs are not representable in binary (about 8 digits is what double precision allows; see
   * shared CHECK-VALUES §5); the naive one-pass formula fails both (checked below).
   */
  static Stream<Arguments> nistNumAcc() {
    return Stream.of(
        Arguments.of("NumAcc1", new double[] {10000001, 10000003, 10000002}, 10000002.0, 1.0, 1e-15, 1e-15),
        Arguments.of("NumAcc2", numAcc(1.2, 1.1, 1.3), 1.2, 0.1, 1e-13, 1e-12),
        Arguments.of("NumAcc3", numAcc(1000000.2, 1000000.1, 1000000.3), 1000000.2, 0.1, 1e-13, 1e-7),
        Arguments.of("NumAcc4", numAcc(10000000.2, 10000000.1, 10000000.3), 10000000.2, 0.1, 1e-13, 1e-7));
  }

  /** The NumAcc2–4 rule: the first value, then 500 pairs of (low, high): 1001 values. */
  private static double[] numAcc(double first, double low, double high) {
    double[] y = new double[1001];
    y[0] = first;
    for (int i = 0; i < 500; i++) {
      y[1 + 2 * i] = low;
      y[2 + 2 * i] = high;
    }
    return y;
  }

  @ParameterizedTest(name = "{0}")
  @MethodSource
  void nistNumAcc(String set, double[] y, double mean, double sd, double meanTol, double sdTol) {
    WeightedMoments m = new WeightedMoments();
    for (double v : y) {
      m.accept(v);
    }
    assertEquals(y.length, m.count(), set);
    assertEquals(mean, m.mean(), meanTol * mean, set + " certified mean");
    assertEquals(sd, m.standardDeviation(), sdTol * sd, set + " certified standard deviation");
    assertEquals(y.length, m.sumOfWeights(), 0, set + " Σw");
    assertEquals(y.length, m.sumOfSquaredWeights(), 0, set + " Σw²");
  }

  /** The naive Σx² − (Σx)²/n formula misses NumAcc3 and NumAcc4 by far more than the tolerance used above. */
  @ParameterizedTest(name = "{0}")
  @MethodSource("nistNumAcc")
  void naiveFormulaFailsTheHardSets(String set, double[] y, double mean, double sd, double meanTol, double sdTol) {
    if (!set.equals("NumAcc3") && !set.equals("NumAcc4")) {
      return;
    }
    double s = 0;
    double s2 = 0;
    for (double v : y) {
      s += v;
      s2 += v * v;
    }
    double naive = Math.sqrt(Math.max(0, (s2 - s * s / y.length) / (y.length - 1)));
    assertTrue(Math.abs(naive - sd) > sdTol * sd * 100, set + ": naive sd " + naive);
  }

  /** Analytic: an integer weight k is the same as k copies of the value (frequency weights). */
  @Test
  void integerWeightsEqualRepeatedValues() {
    SplittableRandom r = new SplittableRandom(7);
    WeightedMoments weighted = new WeightedMoments();
    WeightedMoments repeated = new WeightedMoments();
    for (int i = 0; i < 1000; i++) {
      double x = 100 + 5 * r.nextGaussian();
      int k = 1 + r.nextInt(5);
      weighted.accept(x, k);
      for (int j = 0; j < k; j++) {
        repeated.accept(x);
      }
    }
    assertEquals(repeated.mean(), weighted.mean(), 1e-12 * Math.abs(repeated.mean()), "seed 7");
    assertEquals(repeated.populationVariance(), weighted.populationVariance(),
        1e-10 * repeated.populationVariance(), "seed 7");
  }

  /** Merging two halves gives the single-stream result (the pairwise update cited in WeightedMoments). */
  @Test
  void combineEqualsOneStream() {
    SplittableRandom r = new SplittableRandom(11);
    WeightedMoments all = new WeightedMoments();
    WeightedMoments a = new WeightedMoments();
    WeightedMoments b = new WeightedMoments();
    for (int i = 0; i < 2000; i++) {
      double x = r.nextExponential();
      double w = 0.1 + r.nextDouble();
      all.accept(x, w);
      (i < 700 ? a : b).accept(x, w);
    }
    a.combine(b);
    assertEquals(all.count(), a.count());
    assertEquals(all.mean(), a.mean(), 1e-13 * all.mean(), "seed 11");
    assertEquals(all.variance(), a.variance(), 1e-12 * all.variance(), "seed 11");
    assertEquals(all.sumOfWeights(), a.sumOfWeights(), 1e-13 * all.sumOfWeights(), "seed 11");
  }

  /** Edge cases listed in the class javadoc. */
  @Test
  void edgeCases() {
    WeightedMoments empty = new WeightedMoments();
    assertTrue(Double.isNaN(empty.mean()));
    assertTrue(Double.isNaN(empty.variance()));
    assertEquals(0, empty.sumOfWeights());
    WeightedMoments one = new WeightedMoments();
    one.accept(3.5, 2);
    assertEquals(3.5, one.mean());
    assertEquals(0, one.populationVariance());
    assertTrue(Double.isNaN(one.variance()));
  }
}
