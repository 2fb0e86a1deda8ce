package triage.core.calibration;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import triage.core.inference.ChiSquaredFit;
import triage.core.inference.ChiSquaredTail;
import triage.core.inference.EmpiricalPValue;
import triage.core.ratio.FitResult;
import triage.core.ratio.FitSettings;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.TrainingData;
import triage.core.ratio.WeightPolicy;

/**
 * Fits toys exactly like the data (same network, loss, clip, optimiser and stopping rule; the toy's own seed) and
 * turns the toys' t values into a p-value for the observed t.
 *
 * <p>A toy draws its observed sample from the reference ({@link ToySampler}); the rest of the reference, with its
 * weights renormalised to the same expected count N_exp as in the data fit, is its reference.
 */
public final class Calibration {
  private Calibration() {
    // no instance
  }

  /** Receives each finished toy (to store it at once). */
  @FunctionalInterface
  public interface Listener {
    /** Called after each toy. */
    void finished(ToyLog.Entry entry) throws java.io.IOException;
  }

  /**
   * Fits the given toys.
   *
   * @param names feature names
   * @param reference reference features, feature-major (d × n)
   * @param weights reference weights
   * @param expected N_exp
   * @param settings the data fit's settings
   * @param runSeed the run seed
   * @param toys the toy indices to fit
   * @param listener receives each finished toy
   */
  public static List<ToyLog.Entry> run(List<String> names, double[] reference, double[] weights, double expected,
      FitSettings settings, long runSeed, long[] toys, Listener listener) throws java.io.IOException {
    int n = weights.length;
    int d = names.size();
    List<ToyLog.Entry> out = new ArrayList<>();
    for (long k : toys) {
      long start = System.nanoTime();
      ToySampler.Toy toy = ToySampler.draw(weights, expected, runSeed, k);
      if (toy.reference().length == 0 || toy.observed().length == 0) {
        throw new IllegalStateException("toy " + k + " left an empty sample");
      }
      double[] obs = gather(reference, n, d, toy.observed());
      double[] ref = gather(reference, n, d, toy.reference());
      double[] w = new double[toy.reference().length];
      for (int i = 0; i < w.length; i++) {
        w[i] = weights[toy.reference()[i]];
      }
      long seed = ToySampler.toySeed(runSeed, k);
      FitResult fit = RatioTrainer.fit(new TrainingData(names, ref, w, obs, WeightPolicy.POSITIVE_ONLY,
          OptionalDouble.of(expected)), settings.withSeed(seed));
      ToyLog.Entry e = new ToyLog.Entry(k, seed, toy.observed().length, fit.testStatistic(), fit.converged(),
          fit.iterations(), (System.nanoTime() - start) / 1e9);
      listener.finished(e);
      out.add(e);
    }
    return out;
  }

  private static double[] gather(double[] featureMajor, int n, int d, int[] rows) {
    double[] out = new double[d * rows.length];
    for (int k = 0; k < d; k++) {
      for (int i = 0; i < rows.length; i++) {
        out[k * rows.length + i] = featureMajor[k * n + rows[i]];
      }
    }
    return out;
  }

  /**
   * The p-value of an observed t from toys.
   *
   * @param observed t_obs
   * @param empirical the toy p-value ((k+1)/(N+1); a bound p &lt; 1/N when no toy reaches t_obs)
   * @param fit the maximum-likelihood χ² fit to the toys (null with fewer than 10 toys)
   * @param pFitted asymptotic p from χ² with the fitted degrees of freedom
   * @param zFitted its Z
   * @param parameters the network's parameter count (Wilks' degrees of freedom)
   * @param pParameters asymptotic p from χ² with the parameter count
   * @param zParameters its Z
   * @param headline which figure to quote and why
   * @param warnings disagreements and extrapolations to be shown
   */
  public record Summary(double observed, EmpiricalPValue.Result empirical, ChiSquaredFit.Result fit, double pFitted,
      double zFitted, int parameters, double pParameters, double zParameters, String headline,
      List<String> warnings) {}

  /** Summarises toys against an observed t. */
  public static Summary summarise(double observed, double[] toys, int parameters) {
    EmpiricalPValue.Result emp = EmpiricalPValue.withDefaults().test(toys, observed);
    ChiSquaredFit.Result fit = null;
    double pFromFit = Double.NaN;
    double zFromFit = Double.NaN;
    List<String> warnings = new ArrayList<>();
    int positive = 0;
    double max = Double.NEGATIVE_INFINITY;
    for (double t : toys) {
      if (t > 0) {
        positive++;
      }
      max = Math.max(max, t);
    }
    if (positive >= 10 && positive == toys.length) {
      fit = ChiSquaredFit.withDefaults().fit(toys);
      pFromFit = fit.pValue(observed);
      zFromFit = fit.z(observed);
      if (fit.ksPValue() < 0.01) {
        warnings.add(String.format(java.util.Locale.ROOT, "the toys do not follow a χ² (KS p = %.2g against "
            + "χ²(%.1f)): asymptotic figures are unreliable", fit.ksPValue(), fit.dof()));
      }
    } else if (toys.length >= 10) {
      warnings.add("some toys have t ≤ 0, so no χ² was fitted");
    } else {
      warnings.add("fewer than 10 toys: no χ² fit; run more toys");
    }
    double pPar = ChiSquaredTail.pValue(observed, parameters);
    double zPar = ChiSquaredTail.z(observed, parameters);
    String headline;
    if (emp.bound() == EmpiricalPValue.Bound.UPPER_BOUND) {
      headline = String.format(java.util.Locale.ROOT, "no toy reached t_obs: p < 1/N = %.3g, Z > %.2f from the %d "
          + "toys; the χ² figures extrapolate beyond them", emp.pValue(), emp.z(), toys.length);
      warnings.add(String.format(java.util.Locale.ROOT, "t_obs = %.4g is beyond the largest toy (%.4g): the "
          + "asymptotic p-values are extrapolations", observed, max));
    } else {
      headline = String.format(java.util.Locale.ROOT, "the empirical toy p-value: p = %.3g ± %.2g, Z = %.2f "
          + "(%d of %d toys at or above t_obs)", emp.pValue(), emp.standardError(), emp.z(), emp.exceedances(),
          toys.length);
      if (!Double.isNaN(zFromFit) && Math.abs(zFromFit - emp.z()) > 1) {
        warnings.add(String.format(java.util.Locale.ROOT, "the empirical Z (%.2f) and the fitted-χ² Z (%.2f) differ"
            + " by more than 1", emp.z(), zFromFit));
      }
    }
    if (fit != null && Math.abs(fit.dof() - parameters) > 3 * fit.standardError() + 0.1 * parameters) {
      warnings.add(String.format(java.util.Locale.ROOT, "the fitted degrees of freedom (%.1f ± %.1f) differ from the"
          + " parameter count (%d): Wilks' asymptotics do not hold at this clip (see clip tuning)", fit.dof(),
          fit.standardError(), parameters));
    }
    return new Summary(observed, emp, fit, pFromFit, zFromFit, parameters, pPar, zPar, headline, warnings);
  }
}
