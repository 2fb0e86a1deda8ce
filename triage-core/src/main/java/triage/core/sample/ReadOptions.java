package triage.core.sample;

/**
 * How to read a sample file.
 *
 * @param badRows what to do with a row that fails validation
 * @param weights which reference weights are accepted
 * @param batchSize the number of events handed over at a time
 */
public record ReadOptions(BadRowPolicy badRows, WeightPolicy weights, int batchSize) {
  /** The default batch size: large enough to amortise hand-over, small enough to keep memory bounded. */
  public static final int DEFAULT_BATCH = 8192;

  /** Checks the batch size. */
  public ReadOptions {
    if (badRows == null || weights == null) {
      throw new IllegalArgumentException("bad-row and weight policies are required");
    }
    if (batchSize < 1) {
      throw new IllegalArgumentException("batch size " + batchSize + " is not positive");
    }
  }

  /** Fail on the first bad row, positive weights only. */
  public static ReadOptions strict() {
    return new ReadOptions(BadRowPolicy.FAIL, WeightPolicy.POSITIVE, DEFAULT_BATCH);
  }

  /** The same options with another bad-row policy. */
  public ReadOptions with(BadRowPolicy policy) {
    return new ReadOptions(policy, weights, batchSize);
  }

  /** The same options with another weight policy. */
  public ReadOptions with(WeightPolicy policy) {
    return new ReadOptions(badRows, policy, batchSize);
  }

  /** The same options with another batch size. */
  public ReadOptions withBatchSize(int size) {
    return new ReadOptions(badRows, weights, size);
  }
}
