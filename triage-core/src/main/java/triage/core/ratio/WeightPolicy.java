package triage.core.ratio;

/**
 * Which reference weights {@link TrainingData} accepts. Weights must be finite in every case and
 * their sum must be positive.
 */
public enum WeightPolicy {
  /** Every reference weight must be strictly positive. */
  POSITIVE_ONLY,
  /** Negative (and zero) weights are allowed, as produced by some event generators. */
  ALLOW_NEGATIVE
}
