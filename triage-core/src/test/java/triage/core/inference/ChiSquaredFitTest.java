package triage.core.inference;

import triage.core.stats.NeumaierSum;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.core.inference.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.apache.commons.numbers.gamma.Digamma;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import org.apache.commons.statistics.distribution.ContinuousDistribution;
import org.apache.commons.statistics.distribution.GammaDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class ChiSquaredFitTest {

  @Test
  void againstScipyFit() {
    // chi2-fit-expected.csv [C] (generate_fixtures.py): 400 draws of chi2(4.5); scipy
    // stats.chi2.fit(data, floc=0, fscale=1) = 4.4443359 (Nelder-Mead, so only ~1e-4 relative; tolerance 1e-4)
    // and the exact root of the score equation by brentq (tolerance 1e-12 relative), se = 2/sqrt(N psi'(nu/2))
    final double[] data = Fixtures.column("chi2-fit-sample.csv");
    final double[] e = Fixtures.rows("chi2-fit-expected.csv").get(0);
    final ChiSquaredFit.Result r = ChiSquaredFit.withDefaults().fit(data);
    assertRelative(e[0], r.dof(), 1e-4, "scipy fit");
    assertRelative(e[1], r.dof(), 1e-12, "score root");
    assertRelative(e[2], r.standardError(), 1e-12, "standard error");
    assertRelative(e[3], r.ksStatistic(), 1e-11, "KS D");
    assertRelative(e[4], r.ksPValue(), 1e-6, "KS p (kstest, Pelz–Good above n = 140)");
    assertRelative(e[5], r.ksPValue(), 1e-9, "KS p (exact Durbin matrix)");
    assertEquals(400, r.toys());
    assertEquals(r.dof(), ChiSquaredFit.statistic(data), 0.0);
  }

  @Test
  void maximumOfLikelihood() {
    // the log-likelihood at nu_hat exceeds that at nu_hat +- 0.01 (concavity); compared with the
    // commons-statistics chi-squared log density summed over the toys (tolerance 1e-12 relative)
    final double[] data = Fixtures.column("chi2-fit-sample.csv");
    final ChiSquaredFit.Result r = ChiSquaredFit.withDefaults().fit(data);
    assertRelative(logLikelihood(data, r.dof()), r.logLikelihood(), 1e-12, "log-likelihood");
    assertTrue(logLikelihood(data, r.dof() + 0.01) < r.logLikelihood());
    assertTrue(logLikelihood(data, r.dof() - 0.01) < r.logLikelihood());
  }

  private static double logLikelihood(double[] t, double nu) {
    final ChiSquaredDistribution d = ChiSquaredDistribution.of(nu);
    final NeumaierSum s = NeumaierSum.create();
    for (final double v : t) {
      s.add(d.logDensity(v));
    }
    return s.value();
  }

  static Stream<Arguments> recoversDof() {
    return Stream.of(Arguments.of(1.0, 11L), Arguments.of(3.0, 12L), Arguments.of(10.0, 13L),
      Arguments.of(0.3, 14L), Arguments.of(57.0, 15L));
  }

  @ParameterizedTest
  @MethodSource
  void recoversDof(double nu, long seed) {
    // 20000 seeded draws from chi2_nu: |nu_hat - nu| < 4 se (a 4 sigma bound for an asymptotically normal MLE),
    // and the KS goodness of fit does not reject at 1e-3
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(seed);
    final ContinuousDistribution.Sampler sampler = ChiSquaredDistribution.of(nu).createSampler(rng);
    final double[] t = new double[20000];
    for (int i = 0; i < t.length; i++) {
      t[i] = sampler.sample();
    }
    final ChiSquaredFit.Result r = ChiSquaredFit.withDefaults().fit(t);
    assertTrue(Math.abs(r.dof() - nu) < 4 * r.standardError(), "nu_hat=" + r.dof() + " se=" + r.standardError());
    assertTrue(!r.rejectFit(1e-3), "KS p=" + r.ksPValue());
  }

  @Test
  void standardErrorIsCalibrated() {
    // the spread of nu_hat over 400 seeded experiments of 200 toys matches the Fisher-information se:
    // ratio of the empirical sd to se within [0.85, 1.15] (sd of a sample sd of 400 values is ~3.5%, plus
    // the O(1/N) bias of the MLE)
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(77L);
    final ContinuousDistribution.Sampler sampler = ChiSquaredDistribution.of(4).createSampler(rng);
    final double[] fits = new double[400];
    double se = 0;
    for (int k = 0; k < fits.length; k++) {
      final double[] t = new double[200];
      for (int i = 0; i < t.length; i++) {
        t[i] = sampler.sample();
      }
      final ChiSquaredFit.Result r = ChiSquaredFit.withDefaults().fit(t);
      fits[k] = r.dof();
      se += r.standardError() / fits.length;
    }
    double mean = NeumaierSum.of(fits) / fits.length;
    double ss = 0;
    for (final double f : fits) {
      ss += (f - mean) * (f - mean);
    }
    final double ratio = Math.sqrt(ss / (fits.length - 1)) / se;
    assertTrue(ratio > 0.85 && ratio < 1.15, "sd/se = " + ratio);
  }

  @Test
  void goodnessOfFitRejectsWrongShape() {
    // toys from a gamma with scale 3 (not a chi-squared with scale 2): the KS fit must reject at 1e-6
    final UniformRandomProvider rng = RandomSource.XO_RO_SHI_RO_128_PP.create(5L);
    final ContinuousDistribution.Sampler sampler = GammaDistribution.of(2, 3).createSampler(rng);
    final double[] t = new double[5000];
    for (int i = 0; i < t.length; i++) {
      t[i] = sampler.sample();
    }
    assertTrue(ChiSquaredFit.withDefaults().fit(t).rejectFit(1e-6));
  }

  @Test
  void inverseDigamma() {
    // psi(inverse(c)) = c over a wide range; tolerance 1e-13 relative in x checked through psi (1e-12 absolute)
    for (double c = -30; c < 12; c += 0.37) {
      final double x = ChiSquaredFit.inverseDigamma(c);
      assertEquals(c, Digamma.value(x), 1e-12 * Math.max(1, Math.abs(c)), "c=" + c);
    }
    // psi(1) = -gamma (Euler–Mascheroni constant, 0.5772156649015329, from memory; also used in the code)
    assertRelative(1.0, ChiSquaredFit.inverseDigamma(-0.5772156649015329), 1e-14, "psi(1)");
  }

  @Test
  void edgeCases() {
    assertThrows(InferenceArgumentException.class, () -> ChiSquaredFit.withDefaults().fit(new double[] {1, 0}));
    assertThrows(InferenceArgumentException.class, () -> ChiSquaredFit.withDefaults().fit(new double[0]));
    assertThrows(InferenceArgumentException.class,
      () -> ChiSquaredFit.withDefaults().fit(new double[] {1, Double.POSITIVE_INFINITY}));
    final ChiSquaredFit.Result one = ChiSquaredFit.withDefaults().fit(new double[] {2.0});
    // one toy t = 2: psi(nu/2) = ln(1) = 0 -> nu/2 = 1.4616321449683623 (the positive root of digamma,
    // from memory; checked by the digamma of commons-numbers-gamma), tolerance 1e-13 relative
    assertRelative(2 * 1.4616321449683623, one.dof(), 1e-13, "single toy");
    assertEquals(ChiSquaredTail.pValue(3, one.dof()), one.pValue(3), 0.0);
  }
}
