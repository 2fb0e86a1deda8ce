package triage.core.calibration;

/**
 * A signal injected into toys to measure sensitivity: each signal toy is a null toy (a Poisson(N_exp) draw from the
 * reference) plus Poisson(K) signal events, K the {@link #yield()}.
 */
public sealed interface Signal {
  /** K, the mean number of injected events per toy. */
  double yield();

  /** A short description for output and toy-file headers. */
  String describe();

  /**
   * Signal events drawn from another sample of the index: Poisson(K) of its events, with probability proportional
   * to weight and without replacement (as {@link ToySampler} draws from the reference).
   *
   * @param name the sample's name
   * @param features its features, feature-major (d × m), in the model's feature order
   * @param weights its weights (positive)
   * @param yield K
   */
  record FromSample(String name, double[] features, double[] weights, double yield) implements Signal {
    /** Checks the sizes and the yield. */
    public FromSample {
      if (weights.length == 0 || features.length % weights.length != 0) {
        throw new IllegalArgumentException("sample '" + name + "': " + features.length + " feature values for "
            + weights.length + " events");
      }
      positive(yield);
    }

    @Override
    public String describe() {
      return String.format(java.util.Locale.ROOT, "sample %s, yield %s", name, yield);
    }
  }

  /**
   * A Gaussian bump in one feature: Poisson(K) carrier events are drawn from the toy's reference (with probability
   * proportional to weight, without replacement, and removed from the toy's reference), and the chosen feature of
   * each is replaced by a draw from N(mean, sigma²). The other features keep their reference values, so the signal
   * is reference-like in every feature but one.
   *
   * @param feature the feature's name
   * @param index its position among the model's features
   * @param mean the bump's mean
   * @param sigma its standard deviation (positive)
   * @param yield K
   */
  record Bump(String feature, int index, double mean, double sigma, double yield) implements Signal {
    /** Checks the width and the yield. */
    public Bump {
      if (!(sigma > 0) || !Double.isFinite(sigma) || !Double.isFinite(mean)) {
        throw new IllegalArgumentException("bump in '" + feature + "': mean " + mean + " must be finite and sigma "
            + sigma + " finite and positive");
      }
      positive(yield);
    }

    @Override
    public String describe() {
      return String.format(java.util.Locale.ROOT, "Gaussian bump in %s (mean %s, sigma %s), yield %s", feature,
          mean, sigma, yield);
    }
  }

  private static void positive(double yield) {
    if (!(yield > 0) || !Double.isFinite(yield)) {
      throw new IllegalArgumentException("signal yield " + yield + " must be finite and positive");
    }
  }
}
