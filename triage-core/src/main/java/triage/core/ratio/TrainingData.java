package triage.core.ratio;

import java.util.HashSet;
import java.util.List;
import java.util.OptionalDouble;

/**
 * The two samples a density-ratio fit compares: a weighted reference (background-only) sample
 * and the observed sample, both stored <b>feature-major</b> (feature k of event i at
 * {@code k·n + i}) in primitive arrays.
 *
 * <p>Validation: at least one feature, one reference and one observed event; array lengths equal
 * nFeatures·nRef, nRef and nFeatures·nObs; every value finite; weights strictly positive under
 * {@link WeightPolicy#POSITIVE_ONLY}, finite with a positive sum under
 * {@link WeightPolicy#ALLOW_NEGATIVE}; feature names distinct and non-blank, one per feature; an
 * explicit expected count, if given, finite and &gt; 0.
 *
 * <p>Normalisation: the trainer rescales the weights to w_i · N_exp / Σ w, where N_exp is the
 * explicit expected observed count if set, else N_obs. The arrays are copied on construction
 * and accessors return copies (package code reads them in place).
 */
public final class TrainingData {
  /** Number of features d. */
  private final int features;
  /** Number of reference events. */
  private final int referenceCount;
  /** Number of observed events. */
  private final int observedCount;
  /** Reference features, feature-major, length d·nRef. */
  private final double[] reference;
  /** Reference weights, length nRef. */
  private final double[] referenceWeights;
  /** Observed features, feature-major, length d·nObs. */
  private final double[] observed;
  /** Feature names, one per feature. */
  private final List<String> featureNames;
  /** Accepted weight signs. */
  private final WeightPolicy weightPolicy;
  /** Expected observed count N_exp, empty for N_obs. */
  private final OptionalDouble expectedCount;

  /**
   * Builds and validates the samples (arrays are copied).
   *
   * @param featureNames     one distinct name per feature
   * @param reference        reference features, feature-major
   * @param referenceWeights reference weights
   * @param observed         observed features, feature-major
   * @param weightPolicy     accepted weight signs
   * @param expectedCount    N_exp, or empty to use N_obs
   */
  public TrainingData(List<String> featureNames, double[] reference, double[] referenceWeights,
            double[] observed, WeightPolicy weightPolicy, OptionalDouble expectedCount) {
    this.featureNames = List.copyOf(featureNames);
    this.features = this.featureNames.size();
    if (features < 1) {
      throw new IllegalArgumentException("at least one feature is required");
    }
    var seen = new HashSet<String>();
    for (String name : this.featureNames) {
      if (name.isBlank() || !seen.add(name)) {
        throw new IllegalArgumentException("feature names must be distinct and non-blank: "
            + this.featureNames);
      }
    }
    this.referenceCount = referenceWeights.length;
    if (referenceCount < 1 || reference.length != (long) features * referenceCount) {
      throw new IllegalArgumentException("reference array has " + reference.length
          + " values, expected " + features + " x " + referenceCount);
    }
    if (observed.length == 0 || observed.length % features != 0) {
      throw new IllegalArgumentException("observed array length " + observed.length
          + " is not a positive multiple of " + features);
    }
    this.observedCount = observed.length / features;
    this.weightPolicy = weightPolicy;
    this.expectedCount = expectedCount;
    this.reference = reference.clone();
    this.referenceWeights = referenceWeights.clone();
    this.observed = observed.clone();
    requireFinite(this.reference, "reference features");
    requireFinite(this.observed, "observed features");
    requireFinite(this.referenceWeights, "reference weights");
    if (weightPolicy == WeightPolicy.POSITIVE_ONLY) {
      for (int i = 0; i < referenceCount; i++) {
        if (!(this.referenceWeights[i] > 0)) {
          throw new IllegalArgumentException("reference weight " + i + " is not positive ("
              + this.referenceWeights[i] + "); use WeightPolicy.ALLOW_NEGATIVE");
        }
      }
    }
    if (!(Standardisation.compensatedSum(this.referenceWeights, 0, referenceCount) > 0)) {
      throw new IllegalArgumentException("the reference weights must have a positive sum");
    }
    if (expectedCount.isPresent()) {
      double e = expectedCount.getAsDouble();
      if (!Double.isFinite(e) || !(e > 0)) {
        throw new IllegalArgumentException("expected count must be finite and > 0: " + e);
      }
    }
  }

  /** Positive weights, expected count N_obs. */
  public static TrainingData of(List<String> featureNames, double[] reference,
                 double[] referenceWeights, double[] observed) {
    return new TrainingData(featureNames, reference, referenceWeights, observed,
        WeightPolicy.POSITIVE_ONLY, OptionalDouble.empty());
  }

  /** Same as {@link #of} from single-precision arrays (widened exactly to double). */
  public static TrainingData ofFloats(List<String> featureNames, float[] reference,
                    float[] referenceWeights, float[] observed) {
    return of(featureNames, widen(reference), widen(referenceWeights), widen(observed));
  }

  /** Copy with an explicit expected observed count N_exp. */
  public TrainingData withExpectedCount(double value) {
    return new TrainingData(featureNames, reference, referenceWeights, observed, weightPolicy,
        OptionalDouble.of(value));
  }

  /** Copy with another weight policy. */
  public TrainingData withWeightPolicy(WeightPolicy policy) {
    return new TrainingData(featureNames, reference, referenceWeights, observed, policy,
        expectedCount);
  }

  private static double[] widen(float[] a) {
    double[] d = new double[a.length];
    for (int i = 0; i < a.length; i++) {
      d[i] = a[i];
    }
    return d;
  }

  private static void requireFinite(double[] a, String what) {
    for (int i = 0; i < a.length; i++) {
      if (!Double.isFinite(a[i])) {
        throw new IllegalArgumentException(what + " contain a non-finite value at " + i);
      }
    }
  }

  /** Number of features d. */
  public int features() {
    return features;
  }

  /** Number of reference events. */
  public int referenceCount() {
    return referenceCount;
  }

  /** Number of observed events N_obs. */
  public int observedCount() {
    return observedCount;
  }

  /** Feature names. */
  public List<String> featureNames() {
    return featureNames;
  }

  /** Weight policy. */
  public WeightPolicy weightPolicy() {
    return weightPolicy;
  }

  /** Explicit expected count, if any. */
  public OptionalDouble expectedCount() {
    return expectedCount;
  }

  /** N_exp: the explicit expected count or N_obs. */
  public double effectiveExpectedCount() {
    return expectedCount.orElse(observedCount);
  }

  /** Copy of the reference features (feature-major). */
  public double[] reference() {
    return reference.clone();
  }

  /** Copy of the reference weights as given. */
  public double[] referenceWeights() {
    return referenceWeights.clone();
  }

  /** Copy of the observed features (feature-major). */
  public double[] observed() {
    return observed.clone();
  }

  /** Reference features without copying (package use). */
  double[] referenceView() {
    return reference;
  }

  /** Weights without copying (package use). */
  double[] weightsView() {
    return referenceWeights;
  }

  /** Observed features without copying (package use). */
  double[] observedView() {
    return observed;
  }

  /** Weights normalised to sum N_exp (Neumaier-compensated sum). */
  double[] normalisedWeights(double total) {
    double sw = Standardisation.compensatedSum(referenceWeights, 0, referenceCount);
    double scale = total / sw;
    double[] w = new double[referenceCount];
    for (int i = 0; i < referenceCount; i++) {
      w[i] = referenceWeights[i] * scale;
    }
    return w;
  }
}
