package triage.core.sample;

/**
 * How to read a sample file.
 *
 * @param badRows what to do with a row that fails validation
 * @param weights which reference weights are accepted
 * @param batchSize the number of events handed over at a time
 * @param suggestSkip whether the message that stops a read on a bad row suggests {@code --on-bad-row skip} (only
 *     for commands that have that option)
 */
public record ReadOptions(BadRowPolicy badRows, WeightPolicy weights, int batchSize, boolean suggestSkip) {
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

  /** Fail on the first bad row (suggesting {@code --on-bad-row skip}), positive weights only. */
  public static ReadOptions strict() {
    return new ReadOptions(BadRowPolicy.FAIL, WeightPolicy.POSITIVE, DEFAULT_BATCH, true);
  }

  /** The same options with another bad-row policy. */
  public ReadOptions with(BadRowPolicy policy) {
    return new ReadOptions(policy, weights, batchSize, suggestSkip);
  }

  /** The same options with another weight policy. */
  public ReadOptions with(WeightPolicy policy) {
    return new ReadOptions(badRows, policy, batchSize, suggestSkip);
  }

  /** The same options with another batch size. */
  public ReadOptions withBatchSize(int size) {
    return new ReadOptions(badRows, weights, size, suggestSkip);
  }

  /** The same options for a command without {@code --on-bad-row}: a bad row's message suggests no skipping. */
  public ReadOptions withoutSkipSuggestion() {
    return new ReadOptions(badRows, weights, batchSize, false);
  }
}
