package triage.core.calibration;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import triage.core.inference.OneSampleKolmogorovSmirnovTest;
import triage.core.ratio.FitResult;
import triage.core.ratio.FitSettings;
import triage.core.ratio.LossKind;
import triage.core.ratio.OptimiserKind;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.TrainingData;

/**
 * Chooses the weight clip from reference-only toys: for each clip C of a grid and each iteration cap of a grid,
 * the toys' t is recorded; for each clip, the median and the 97.5% quantile of t are followed as the cap grows.
 *
 * <p>Rule: a clip <b>plateaus</b> when, from the last-but-one to the last cap, neither the median nor the 97.5%
 * quantile grows by more than a relative tolerance τ: {@code (v_L − v_{L−1}) / max(|v_{L−1}|, 1) ≤ τ} for both
 * (the max with 1 keeps the test meaningful when t is near 0; t is in units of the loss, a sum over events). A clip
 * that keeps growing <b>overfits</b>: with more training the network keeps finding structure in fluctuations.
 * Among plateaued clips the chosen one is the one whose toys at the last cap best follow χ² with the parameter
 * count k (Wilks): the smallest Kolmogorov–Smirnov distance {@code D = sup |F_N(t) − F_{χ²(k)}(t)|}; ties go to the
 * smaller clip. With no plateaued clip nothing is chosen (raise the caps or lower the clips).
 *
 * <p>Toys: toy j of the tuning draws its observed sample from the reference exactly as a calibration toy does
 * ({@link ToySampler}), from a random stream of its own (so tuning toys never repeat calibration toys), and the
 * same draw and the same initial-parameter seed serve every clip (common random numbers: the clips are compared
 * on the same toys).
 *
 * <p>Caps: a fit capped at c iterations is the first c iterations of a longer fit (the optimisers' state does not
 * depend on the cap), so for the extended-likelihood loss one fit per toy and clip, to the largest cap, gives t at
 * every cap: t(c) = −2 min over starts of the loss at iteration min(c, last iteration of that start). For the
 * cross-entropy loss, whose t needs another evaluation, each cap is fitted on its own. The cap is the L-BFGS
 * iteration cap, or the epoch count for Adam.
 */
public final class ClipTuning {
  private ClipTuning() {
    // no instance
  }

  /** Salt of the tuning toys' random stream. */
  static final long TUNING_STREAM = 0x54554E45L;

  /**
   * One toy fitted at one clip, with t at every cap.
   *
   * @param toy the toy index
   * @param seed the toy's fit seed (the same for every clip)
   * @param events observed events drawn
   * @param clip the clip C
   * @param caps the iteration caps, ascending
   * @param t t at each cap
   * @param stoppedAt the iteration where the fit to the largest cap stopped (kept start)
   * @param converged whether that fit met the stopping rule
   * @param seconds wall time of the toy at this clip
   */
  public record TuningToy(long toy, long seed, int events, double clip, int[] caps, double[] t, int stoppedAt,
      boolean converged, double seconds) {}

  /**
   * A clip's curve.
   *
   * @param clip C
   * @param toys toys used
   * @param caps the caps
   * @param median median t at each cap
   * @param upper 97.5% quantile of t at each cap
   * @param growth the larger relative growth of median and 97.5% quantile from the last-but-one to the last cap
   * @param plateau whether growth ≤ τ
   * @param ksDistance KS distance of the toys' t at the last cap to χ²(parameters)
   * @param converged fraction of toys that met the stopping rule by the last cap
   */
  public record Curve(double clip, int toys, int[] caps, double[] median, double[] upper, double growth,
      boolean plateau, double ksDistance, double converged) {}

  /**
   * The outcome.
   *
   * @param clip the chosen clip, or null when no clip plateaued
   * @param parameters the parameter count k of χ²(k)
   * @param tolerance τ
   * @param rule the rule, in words
   * @param curves one per clip, ascending
   */
  public record Choice(Double clip, int parameters, double tolerance, String rule, List<Curve> curves) {}

  /** The run seed of the tuning toys for a run seed. */
  public static long tuningSeed(long runSeed) {
    return ToySampler.toySeed(runSeed ^ TUNING_STREAM, -1);
  }

  /**
   * Fits the given toys at one clip.
   *
   * @param names feature names
   * @param reference reference features, feature-major (d × n)
   * @param weights reference weights
   * @param expected N_exp
   * @param settings the model's settings (clip and cap are replaced)
   * @param runSeed the run seed (the tuning stream is derived from it)
   * @param clip C
   * @param caps iteration caps, ascending, distinct, ≥ 1
   * @param toys toy indices
   * @param listener receives each toy
   */
  public static List<TuningToy> run(List<String> names, double[] reference, double[] weights, double expected,
      FitSettings settings, long runSeed, double clip, int[] caps, long[] toys,
      Calibration.Listener<TuningToy> listener) throws java.io.IOException {
    checkCaps(caps);
    int n = weights.length;
    int d = names.size();
    long stream = tuningSeed(runSeed);
    List<TuningToy> out = new ArrayList<>();
    for (long k : toys) {
      triage.core.Cancellation.check();
      long start = System.nanoTime();
      ToySampler.Toy toy = ToySampler.draw(weights, expected, stream, k);
      long seed = ToySampler.toySeed(stream, k);
      TrainingData data = Calibration.toyData(names, reference, n, d, expected, toy.observed(),
          toy.reference(), toy.referenceWeights(), new double[0], k);
      TuningToy e = fitAtCaps(data, settings.withClip(clip).withSeed(seed), caps, k, toy.observed().length,
          start);
      listener.finished(e);
      out.add(e);
    }
    return out;
  }

  /** t at every cap for one toy (see the class comment). */
  static TuningToy fitAtCaps(TrainingData data, FitSettings s, int[] caps, long k, int events, long start) {
    int last = caps[caps.length - 1];
    double[] t = new double[caps.length];
    FitResult fit;
    if (s.loss() == LossKind.EXTENDED_LIKELIHOOD) {
      double[][] lossAt = new double[s.restarts()][caps.length];
      double[] lastLoss = new double[s.restarts()];
      for (double[] row : lossAt) {
        Arrays.fill(row, Double.NaN);
      }
      fit = RatioTrainer.fit(data, capped(s, last), (r, iteration, loss, pg, x) -> {
        lastLoss[r] = loss;
        int j = Arrays.binarySearch(caps, iteration);
        if (j >= 0) {
          lossAt[r][j] = loss;
        }
      });
      for (int j = 0; j < caps.length; j++) {
        double best = Double.POSITIVE_INFINITY;
        for (int r = 0; r < lossAt.length; r++) {
          best = Math.min(best, Double.isNaN(lossAt[r][j]) ? lastLoss[r] : lossAt[r][j]);
        }
        t[j] = -2 * best;
      }
      if (t[caps.length - 1] != fit.testStatistic()) {
        throw new IllegalStateException("toy " + k + ": t at the last cap " + t[caps.length - 1]
            + " differs from the fit's " + fit.testStatistic());
      }
    } else {
      fit = null;
      for (int j = 0; j < caps.length; j++) {
        fit = RatioTrainer.fit(data, capped(s, caps[j]));
        t[j] = fit.testStatistic();
      }
    }
    return new TuningToy(k, s.seed(), events, s.clip(), caps.clone(), t, fit.iterations(), fit.converged(),
        (System.nanoTime() - start) / 1e9);
  }

  /** The settings with the iteration cap (L-BFGS) or epoch count (Adam) set to {@code cap}. */
  public static FitSettings capped(FitSettings s, int cap) {
    return s.optimiser() == OptimiserKind.ADAM ? s.withAdamEpochs(cap)
        : s.withStoppingRule(s.stoppingRule().withMaxIterations(cap));
  }

  /** A clip's curve from its toys. */
  public static Curve curve(double clip, int[] caps, List<TuningToy> toys, int parameters, double tolerance) {
    checkCaps(caps);
    if (toys.isEmpty()) {
      throw new IllegalArgumentException("no tuning toys at clip " + clip);
    }
    int m = toys.size();
    double[] median = new double[caps.length];
    double[] upper = new double[caps.length];
    double[] col = new double[m];
    for (int j = 0; j < caps.length; j++) {
      for (int i = 0; i < m; i++) {
        col[i] = toys.get(i).t()[j];
      }
      Arrays.sort(col);
      median[j] = Quantiles.sorted(col, 0.5);
      upper[j] = Quantiles.sorted(col, 0.975);
    }
    int l = caps.length - 1;
    double growth = Math.max(relativeGrowth(median[l - 1], median[l]), relativeGrowth(upper[l - 1], upper[l]));
    double[] lastT = new double[m];
    int converged = 0;
    for (int i = 0; i < m; i++) {
      lastT[i] = toys.get(i).t()[l];
      if (toys.get(i).converged()) {
        converged++;
      }
    }
    ChiSquaredDistribution chi2 = ChiSquaredDistribution.of(parameters);
    double d = OneSampleKolmogorovSmirnovTest.withDefaults().test(lastT, chi2::cumulativeProbability).statistic();
    return new Curve(clip, m, caps.clone(), median, upper, growth, growth <= tolerance, d, (double) converged / m);
  }

  /** (b − a) / max(|a|, 1). */
  static double relativeGrowth(double a, double b) {
    return (b - a) / Math.max(Math.abs(a), 1);
  }

  /** Chooses among the curves (see the class comment). */
  public static Choice choose(List<Curve> curves, int parameters, double tolerance) {
    Curve best = null;
    for (Curve c : curves) {
      if (c.plateau() && (best == null || c.ksDistance() < best.ksDistance())) {
        best = c;
      }
    }
    String rule = String.format(Locale.ROOT, "plateau: median and 97.5%% quantile of t grow by at most %.3g "
        + "(relative) from the last-but-one to the last cap; among plateaued clips, the smallest KS distance of "
        + "the toys' t at the last cap to χ²(%d parameters)", tolerance, parameters);
    return new Choice(best == null ? null : best.clip(), parameters, tolerance, rule, List.copyOf(curves));
  }

  /**
   * Checks a cap grid: at least two caps, ascending, distinct and ≥ 1.
   *
   * @throws IllegalArgumentException naming the grid otherwise
   */
  public static void checkCaps(int[] caps) {
    if (caps.length < 2) {
      throw new IllegalArgumentException("clip tuning needs at least two iteration caps, got "
          + Arrays.toString(caps));
    }
    for (int j = 0; j < caps.length; j++) {
      if (caps[j] < 1 || (j > 0 && caps[j] <= caps[j - 1])) {
        throw new IllegalArgumentException("iteration caps must be ascending, distinct and ≥ 1: "
            + Arrays.toString(caps));
      }
    }
  }
}
