package triage.core.calibration;

import java.util.ArrayList;
import java.util.List;
import java.util.OptionalDouble;
import triage.core.inference.ChiSquaredFit;
import triage.core.inference.ChiSquaredTail;
import triage.core.inference.EmpiricalPValue;
import triage.core.inference.Significance;
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
 * weights corrected for the draw (w/(1 − π)) and renormalised to the same expected count N_exp as in the data fit,
 * is its reference.
 */
public final class Calibration {
  private Calibration() {
    // no instance
  }

  /** Receives each finished toy (to store it at once). */
  @FunctionalInterface
  public interface Listener<T> {
    /** Called after each toy. */
    void finished(T entry) throws java.io.IOException;
  }

  /** Salt of the random streams of signal toys, so they never repeat null toys. */
  static final long SIGNAL_STREAM = 0x5349474E414CL;

  /**
   * Fits the given null toys.
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
      FitSettings settings, long runSeed, long[] toys, Listener<ToyLog.Entry> listener) throws java.io.IOException {
    int n = weights.length;
    int d = names.size();
    List<ToyLog.Entry> out = new ArrayList<>();
    for (long k : toys) {
      triage.core.Cancellation.check();
      long start = System.nanoTime();
      ToySampler.Toy toy = ToySampler.draw(weights, expected, runSeed, k);
      long seed = ToySampler.toySeed(runSeed, k);
      FitResult fit = fitToy(names, reference, n, d, expected, settings.withSeed(seed), toy.observed(),
          toy.reference(), toy.referenceWeights(), new double[0], k);
      ToyLog.Entry e = new ToyLog.Entry(k, seed, toy.observed().length, fit.testStatistic(), fit.converged(),
          fit.iterations(), (System.nanoTime() - start) / 1e9);
      listener.finished(e);
      out.add(e);
    }
    return out;
  }

  /**
   * Fits the given toys with a signal injected: toy k is a Poisson(N_exp) draw from the reference (its own random
   * stream, separate from the null toys') plus the signal's Poisson(K) events (see {@link Signal}); the rest of the
   * reference, renormalised to N_exp, is its reference. N_exp stays the background expectation, so the injected
   * events are an excess, as a real signal would be.
   *
   * @param names feature names
   * @param reference reference features, feature-major (d × n)
   * @param weights reference weights
   * @param expected N_exp
   * @param settings the data fit's settings
   * @param runSeed the run seed
   * @param toys the toy indices to fit
   * @param signal what to inject
   * @param listener receives each finished toy
   */
  public static List<ToyLog.SignalToy> runWithSignal(List<String> names, double[] reference, double[] weights,
      double expected, FitSettings settings, long runSeed, long[] toys, Signal signal,
      Listener<ToyLog.SignalToy> listener) throws java.io.IOException {
    long background = ToySampler.toySeed(runSeed ^ SIGNAL_STREAM, -1);
    List<ToyLog.SignalToy> out = new ArrayList<>();
    for (long k : toys) {
      triage.core.Cancellation.check();
      long start = System.nanoTime();
      SignalDraw draw = drawSignal(names, reference, weights, expected, runSeed, k, signal);
      long seed = ToySampler.toySeed(background, k);
      FitResult fit = RatioTrainer.fit(draw.data(), settings.withSeed(seed));
      ToyLog.SignalToy e = new ToyLog.SignalToy(k, seed, draw.background() + draw.injected(), draw.injected(),
          fit.testStatistic(), fit.converged(), fit.iterations(), (System.nanoTime() - start) / 1e9);
      listener.finished(e);
      out.add(e);
    }
    return out;
  }

  /**
   * One signal toy's data.
   *
   * @param data the training data (observed: background rows, then the injected events)
   * @param background observed background events
   * @param injected injected signal events
   */
  record SignalDraw(TrainingData data, int background, int injected) {}

  /** Draws signal toy k (see {@link #runWithSignal}). */
  static SignalDraw drawSignal(List<String> names, double[] reference, double[] weights, double expected,
      long runSeed, long k, Signal signal) {
    int n = weights.length;
    int d = names.size();
    long background = ToySampler.toySeed(runSeed ^ SIGNAL_STREAM, -1);
    long carriers = ToySampler.toySeed(runSeed ^ SIGNAL_STREAM, -2);
    long gauss = ToySampler.toySeed(runSeed ^ SIGNAL_STREAM, -3);
    ToySampler.Toy toy = ToySampler.draw(weights, expected, background, k);
    int[] refRows = toy.reference();
    double[] refWeights = toy.referenceWeights();
    double[] extra;
    int injected;
    switch (signal) {
      case Signal.FromSample s -> {
        int m = s.weights().length;
        int[] rows = ToySampler.draw(s.weights(), s.yield(), carriers, k).observed();
        extra = gather(s.features(), m, d, rows);
        injected = rows.length;
      }
      case Signal.Bump b -> {
        // The bump's carriers come out of the toy's reference, drawn like a toy from it (its weights already
        // corrected for the first draw); what is left is weighted once more for this second draw.
        ToySampler.Toy split = ToySampler.draw(refWeights, b.yield(), carriers, k);
        int[] rows = new int[split.observed().length];
        for (int i = 0; i < rows.length; i++) {
          rows[i] = refRows[split.observed()[i]];
        }
        int[] rest = new int[split.reference().length];
        for (int i = 0; i < rest.length; i++) {
          rest[i] = refRows[split.reference()[i]];
        }
        refRows = rest;
        refWeights = split.referenceWeights();
        extra = gather(reference, n, d, rows);
        org.apache.commons.rng.UniformRandomProvider rng =
            org.apache.commons.rng.simple.RandomSource.SPLIT_MIX_64.create(ToySampler.toySeed(gauss, k));
        var normal = org.apache.commons.rng.sampling.distribution.ZigguratSampler.NormalizedGaussian.of(rng);
        for (int i = 0; i < rows.length; i++) {
          extra[b.index() * rows.length + i] = b.mean() + b.sigma() * normal.sample();
        }
        injected = rows.length;
      }
    }
    TrainingData data = toyData(names, reference, n, d, expected, toy.observed(), refRows, refWeights, extra, k);
    return new SignalDraw(data, toy.observed().length, injected);
  }

  /**
   * Fits one toy: observed = the rows {@code obsRows} of the reference plus {@code extra} (feature-major, appended
   * after them), reference = the rows {@code refRows} with the weights {@code refWeights} renormalised to N_exp.
   */
  static FitResult fitToy(List<String> names, double[] reference, int n, int d, double expected,
      FitSettings settings, int[] obsRows, int[] refRows, double[] refWeights, double[] extra, long k) {
    return RatioTrainer.fit(toyData(names, reference, n, d, expected, obsRows, refRows, refWeights, extra, k),
        settings);
  }

  /** The training data of one toy (see {@link #fitToy}). */
  static TrainingData toyData(List<String> names, double[] reference, int n, int d, double expected,
      int[] obsRows, int[] refRows, double[] refWeights, double[] extra, long k) {
    int m = d == 0 ? 0 : extra.length / d;
    if (refRows.length == 0 || obsRows.length + m == 0) {
      throw new IllegalStateException("toy " + k + " left an empty sample");
    }
    double[] obs = gather(reference, n, d, obsRows);
    if (m > 0) {
      int no = obsRows.length;
      double[] both = new double[d * (no + m)];
      for (int f = 0; f < d; f++) {
        System.arraycopy(obs, f * no, both, f * (no + m), no);
        System.arraycopy(extra, f * m, both, f * (no + m) + no, m);
      }
      obs = both;
    }
    double[] ref = gather(reference, n, d, refRows);
    return new TrainingData(names, ref, refWeights.clone(), obs, WeightPolicy.POSITIVE_ONLY, OptionalDouble.of(expected));
  }

  static double[] gather(double[] featureMajor, int n, int d, int[] rows) {
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
      // p < 1/N is the customary statement; it is not a bound at a stated confidence (if p were exactly 1/N, no
      // toy would reach t_obs in (1 − 1/N)^N ≈ 37% of runs), so the 95% CL bound 1 − 0.05^(1/N) ≈ 3/N goes with it.
      double p95 = -Math.expm1(Math.log(0.05) / toys.length);
      headline = String.format(java.util.Locale.ROOT, "no toy reached t_obs: p < 1/N = %.3g, Z > %.2f from the %d "
          + "toys (at 95%% confidence: p < %.3g, Z > %.2f); the χ² figures extrapolate beyond them", emp.pValue(),
          emp.z(), toys.length, p95, Significance.zFromP(p95));
      warnings.add(String.format(java.util.Locale.ROOT, "t_obs = %.4g is beyond the largest toy (%.4g): the "
          + "asymptotic p-values are extrapolations", observed, max));
    } else {
      headline = String.format(java.util.Locale.ROOT, "the empirical toy p-value: p = (k+1)/(N+1) = %.3g, Z = %.2f "
          + "(k = %d of N = %d toys at or above t_obs; binomial error of the tail probability ± %.2g, 68%% "
          + "Clopper–Pearson interval %.3g–%.3g)", emp.pValue(), emp.z(), emp.exceedances(), toys.length,
          emp.standardError(), emp.lower(), emp.upper());
      // Only where it matters: when either figure claims at least a 1σ excess.
      if (!Double.isNaN(zFromFit) && Math.max(zFromFit, emp.z()) >= 1 && Math.abs(zFromFit - emp.z()) > 1) {
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

  /** Where the median expected Z of a signal comes from. */
  public enum ZSource {
    /** The null toys reach the median signal t: empirical (k+1)/(N+1). */
    EMPIRICAL,
    /** No null toy reaches it: the χ² fitted to the null toys (an extrapolation). */
    FITTED_CHI2,
    /** Too few null toys for a fit: χ² with the parameter count (Wilks). */
    PARAMETER_CHI2
  }

  /**
   * The sensitivity to an injected signal.
   *
   * @param signalToys signal toys used
   * @param medianT median t of the signal toys
   * @param lowerT their 15.87% quantile (the −1σ edge of the central 68.27%)
   * @param upperT their 84.13% quantile
   * @param nullToys null toys the Z is measured against
   * @param pMedian the p-value of the median signal t
   * @param zMedian the median expected Z, Φ⁻¹(1 − pMedian)
   * @param source which null distribution gave it
   * @param power fraction of signal toys with empirical p ≤ 0.05 against the null toys (NaN below 19 null toys)
   * @param statement one line saying what the figure is and where it comes from
   */
  public record Sensitivity(int signalToys, double medianT, double lowerT, double upperT, int nullToys,
      double pMedian, double zMedian, ZSource source, double power, String statement) {}

  /**
   * The median expected significance of a signal: the median of the signal toys' t, and its p-value against the
   * null toys, taken from the empirical null distribution when some null toy reaches it ((k+1)/(N+1)), else from
   * the χ² fitted to the null toys, else (fewer than 10 positive null toys) from χ² with the parameter count.
   * Quantiles are {@link Quantiles} (definition 7).
   */
  public static Sensitivity sensitivity(double[] signal, double[] nulls, int parameters) {
    if (signal.length == 0) {
      throw new IllegalArgumentException("no signal toys");
    }
    double[] sorted = signal.clone();
    java.util.Arrays.sort(sorted);
    double median = Quantiles.sorted(sorted, 0.5);
    double lo = Quantiles.sorted(sorted, 0.15865525393145707);
    double hi = Quantiles.sorted(sorted, 0.8413447460685429);
    int k = 0;
    for (double t : nulls) {
      if (t >= median) {
        k++;
      }
    }
    int positive = 0;
    for (double t : nulls) {
      if (t > 0) {
        positive++;
      }
    }
    double p;
    double z;
    ZSource source;
    String statement;
    if (k > 0) {
      p = (k + 1.0) / (nulls.length + 1.0);
      z = Significance.zFromP(p);
      source = ZSource.EMPIRICAL;
      statement = String.format(java.util.Locale.ROOT, "median expected Z = %.2f from the empirical null "
          + "distribution (%d of %d null toys at or above the median signal t)", z, k, nulls.length);
    } else if (positive >= 10 && positive == nulls.length) {
      ChiSquaredFit.Result fit = ChiSquaredFit.withDefaults().fit(nulls);
      p = fit.pValue(median);
      // Z from ln p where p underflows, so a far extrapolation reads as a large finite Z, not infinity.
      z = ChiSquaredTail.z(median, fit.dof());
      source = ZSource.FITTED_CHI2;
      statement = String.format(java.util.Locale.ROOT, "median expected Z = %.2f from the χ²(%.2f) fitted to the "
          + "null toys: no null toy reaches the median signal t, so this extrapolates (empirically only Z > %.2f)",
          z, fit.dof(), Significance.zFromP(1.0 / nulls.length));
    } else {
      p = ChiSquaredTail.pValue(median, parameters);
      z = ChiSquaredTail.z(median, parameters);
      source = ZSource.PARAMETER_CHI2;
      statement = String.format(java.util.Locale.ROOT, "median expected Z = %.2f from χ²(%d parameters): too few "
          + "null toys (%d) to fit a χ² to; run calibrate without injection first", z, parameters, nulls.length);
    }
    double power = Double.NaN;
    if (nulls.length >= 19) {
      int detected = 0;
      for (double t : signal) {
        int above = 0;
        for (double u : nulls) {
          if (u >= t) {
            above++;
          }
        }
        if ((above + 1.0) / (nulls.length + 1.0) <= 0.05) {
          detected++;
        }
      }
      power = (double) detected / signal.length;
    }
    return new Sensitivity(signal.length, median, lo, hi, nulls.length, p, z, source, power, statement);
  }
}
