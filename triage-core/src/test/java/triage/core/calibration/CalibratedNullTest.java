package triage.core.calibration;

import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.OptionalDouble;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.distribution.PoissonSampler;
import org.apache.commons.rng.sampling.distribution.ZigguratSampler;
import org.apache.commons.rng.simple.RandomSource;
import org.junit.jupiter.api.Test;
import triage.core.inference.ChiSquaredTail;
import triage.core.inference.KolmogorovDistribution;
import triage.core.ratio.FitSettings;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.StoppingRule;
import triage.core.ratio.TrainingData;
import triage.core.ratio.WeightPolicy;

/**
 * The whole calibration under the null: many independent null datasets, each fitted and calibrated with its own
 * toys, give p-values that follow the discrete uniform distribution of the toy estimator, and the false-positive
 * rate at α = 0.05 is α within binomial error.
 *
 * <p>Set-up (fixed seeds, sizes chosen to run in a few seconds): 1D, a 1-2-1 sigmoid network (7 parameters), clip
 * 4, L-BFGS capped at 100 iterations (capped fits are fine: data and toys share the rule), one thread. Dataset d
 * (seed 1000 + d): a reference pool of R = 2,000 events x ~ N(0, 1) with unit weights, N_exp = 100; the observed
 * sample has n ~ Poisson(100) fresh events x ~ N(0, 1); the data fit uses the first R − n pool events as its
 * reference (weights renormalised to N_exp), so it sees exactly the law of one toy (n ~ Poisson(N_exp) observed
 * events and the other R − n events of an R-event i.i.d. reference); then N = 19 toys from the whole pool.
 *
 * <p>Expected distribution (analytic): if t_obs and the N toys were exchangeable, the estimator p = (k+1)/(N+1),
 * k = #{toys ≥ t_obs}, would be exactly uniform on {1/20, 2/20, …, 1} (ties have probability zero for continuous
 * t). The toys share one reference pool while t_obs sees fresh observed events, so exchangeability holds only
 * approximately; the test can tell departures larger than its binomial resolution.
 */
class CalibratedNullTest {
  /** Datasets. */
  private static final int DATASETS = 200;

  /** Toys per dataset. */
  private static final int TOYS = 19;

  @Test
  void pValuesOfNullDatasetsAreUniformOnTheToyGrid() throws Exception {
    FitSettings settings = FitSettings.defaults().withHiddenWidths(List.of(2)).withClip(4).withThreads(1)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(100));
    int r = 2000;
    double nExp = 100;
    int[] counts = new int[TOYS + 1];
    double[] p = new double[DATASETS];
    long[] toyIndices = new long[TOYS];
    for (int i = 0; i < TOYS; i++) {
      toyIndices[i] = i;
    }
    for (int d = 0; d < DATASETS; d++) {
      UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(1000L + d);
      ZigguratSampler.NormalizedGaussian g = ZigguratSampler.NormalizedGaussian.of(rng);
      double[] pool = new double[r];
      double[] w = new double[r];
      for (int i = 0; i < r; i++) {
        pool[i] = g.sample();
        w[i] = 1;
      }
      int n = PoissonSampler.of(rng, nExp).sample();
      double[] obs = new double[n];
      for (int i = 0; i < n; i++) {
        obs[i] = g.sample();
      }
      double[] dataRef = java.util.Arrays.copyOf(pool, r - n);
      double[] dataW = java.util.Arrays.copyOf(w, r - n);
      double tObs = RatioTrainer.fit(new TrainingData(List.of("x"), dataRef, dataW, obs, WeightPolicy.POSITIVE_ONLY,
          OptionalDouble.of(nExp)), settings.withSeed(7 + d)).testStatistic();
      List<ToyLog.Entry> toys = Calibration.run(List.of("x"), pool, w, nExp, settings, 2000L + d, toyIndices,
          e -> { });
      int k = 0;
      for (ToyLog.Entry e : toys) {
        if (e.t() >= tObs) {
          k++;
        }
      }
      counts[k]++;
      p[d] = (k + 1.0) / (TOYS + 1.0);
    }
    // KS distance to the discrete uniform on the grid: sup over grid points j/20 of |F_M(j/20) - j/20| (the
    // empirical CDF only jumps there). Its p-value from the asymptotic Kolmogorov distribution
    // P(sqrt(M) D > λ) (this package's KolmogorovDistribution, itself checked against published values) is
    // conservative for a discrete law; fails when that p-value is below 0.05.
    int cumulative = 0;
    double ks = 0;
    for (int j = 1; j <= TOYS + 1; j++) {
      cumulative += counts[TOYS + 1 - j]; // p = j/20 means k = 20 - j
      ks = Math.max(ks, Math.abs((double) cumulative / DATASETS - (double) j / (TOYS + 1)));
    }
    System.out.println("null datasets: counts by k " + java.util.Arrays.toString(counts) + ", KS " + ks);
    assertTrue(KolmogorovDistribution.survival(ks * Math.sqrt(DATASETS)) > 0.05, "KS distance " + ks
        + " to the grid uniform; counts by k "
        + java.util.Arrays.toString(counts));
    // Pearson χ² over five groups of four grid values (each of probability 1/5 under the grid uniform), 4 degrees
    // of freedom; fails only when its p-value is below 1e-3.
    int[] groups = new int[5];
    for (double v : p) {
      groups[((int) Math.round(v * (TOYS + 1)) - 1) / 4]++;
    }
    double x2 = 0;
    for (int c : groups) {
      x2 += (c - DATASETS / 5.0) * (c - DATASETS / 5.0) / (DATASETS / 5.0);
    }
    assertTrue(ChiSquaredTail.pValue(x2, 4) > 1e-3, "groups " + java.util.Arrays.toString(groups));
    // False positives at α = 0.05: P(p ≤ 0.05) = P(k = 0) = 1/20 exactly under the grid uniform (analytic);
    // binomial standard deviation sqrt(M α (1 − α)) = 3.08 at M = 200; tolerance 3 standard deviations.
    int rejected = counts[0];
    double sd = Math.sqrt(DATASETS * 0.05 * 0.95);
    assertTrue(Math.abs(rejected - DATASETS * 0.05) <= 3 * sd, rejected + " of " + DATASETS
        + " null datasets rejected at α = 0.05");
  }
}
