package triage.core.stats;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.PermutationSampler;

/**
 * Draws a fixed number n of distinct items so that item i is drawn with probability exactly
 * {@code π_i = n s_i / Σ s} (its size share), by randomised systematic sampling with probabilities proportional to
 * size: the items in a fresh uniformly random order, their π laid end to end on [0, n), one uniform start u in
 * [0, 1), and every item whose stretch holds one of u, u + 1, …, u + n − 1 is drawn. Each draw has exactly n items
 * and every π_i holds exactly (up to the 2^−40 grid below); the random order makes every pair of items possible
 * together. Reference: "Sampling with unequal probabilities and without replacement", Ann. Math. Statist. 33
 * (1962) 350–374, doi:10.1214/aoms/1177704564.
 *
 * <p>Items whose share would give π ≥ 1 are drawn every time ("certain"), and the rest is planned again without
 * them (common practice, no source). Items of size zero are never drawn. The probabilities are held as integers in
 * units of 2^−40 that add up exactly to the number of draws left after the certain items, so every draw has
 * exactly n items whatever the rounding.
 *
 * <p>Use {@link #horvitzThompson} to weight the items <i>not</i> drawn so that they still estimate every sum over
 * all items without bias: item i left out carries {@code w_i / (1 − π_i)}.
 */
public final class ProportionalDraw {
  /** One unit of probability in ticks. */
  private static final long ONE = 1L << 40;

  /** Inclusion probability per item. */
  private final double[] inclusion;

  /** Probability in ticks per item (not used for certain items). */
  private final long[] ticks;

  /** Whether an item is drawn every time. */
  private final boolean[] certain;

  /** Items per draw. */
  private final int size;

  private ProportionalDraw(double[] inclusion, long[] ticks, boolean[] certain, int size) {
    this.inclusion = inclusion;
    this.ticks = ticks;
    this.certain = certain;
    this.size = size;
  }

  /**
   * Plans draws of n items with probabilities proportional to the sizes.
   *
   * @param sizes item sizes, finite and ≥ 0 (pass |w| for signed weights)
   * @param n items per draw, 0 ≤ n ≤ the number of items of positive size
   * @throws IllegalArgumentException for a negative or non-finite size or an n that cannot be drawn
   */
  public static ProportionalDraw plan(double[] sizes, int n) {
    int positive = 0;
    for (int i = 0; i < sizes.length; i++) {
      double s = sizes[i];
      if (!(s >= 0) || Double.isInfinite(s)) {
        throw new IllegalArgumentException("size " + s + " of item " + i + " must be finite and >= 0");
      }
      positive += s > 0 ? 1 : 0;
    }
    if (n < 0 || n > positive) {
      throw new IllegalArgumentException("cannot draw " + n + " distinct items from " + positive
          + " of positive size");
    }
    int items = sizes.length;
    // in units of the largest size, so that sums of huge sizes cannot overflow
    double largest = 0;
    for (double x : sizes) {
      largest = Math.max(largest, x);
    }
    if (largest > 0) {
      double[] scaled = new double[items];
      for (int i = 0; i < items; i++) {
        scaled[i] = sizes[i] / largest;
      }
      sizes = scaled;
    }
    double[] inclusion = new double[items];
    boolean[] certain = new boolean[items];
    int left = n;
    // Re-plan until no share reaches 1; each round makes at least one more item certain, so it ends.
    while (true) {
      NeumaierSum total = new NeumaierSum();
      for (int i = 0; i < items; i++) {
        if (!certain[i]) {
          total.add(sizes[i]);
        }
      }
      boolean more = false;
      for (int i = 0; i < items; i++) {
        if (!certain[i] && left > 0 && left * sizes[i] >= total.value()) {
          certain[i] = true;
          left--;
          more = true;
        }
      }
      if (!more) {
        for (int i = 0; i < items; i++) {
          inclusion[i] = certain[i] ? 1.0 : left == 0 ? 0.0 : left * sizes[i] / total.value();
        }
        break;
      }
    }
    long[] ticks = new long[items];
    long sum = 0;
    for (int i = 0; i < items; i++) {
      if (!certain[i]) {
        ticks[i] = (long) Math.floor(inclusion[i] * ONE);
        sum += ticks[i];
      }
    }
    // The floors lose less than one tick per item of positive size: hand the rest out one tick each.
    long rest = left * ONE - sum;
    for (int i = 0; i < items && rest > 0; i++) {
      if (!certain[i] && sizes[i] > 0 && ticks[i] < ONE) {
        ticks[i]++;
        rest--;
      }
    }
    if (rest != 0) {
      throw new IllegalStateException("probability ticks do not add up: " + rest + " left");
    }
    return new ProportionalDraw(inclusion, ticks, certain, n);
  }

  /** The largest inclusion probability (1 when an item is drawn every time). */
  public double largestInclusion() {
    double m = 0;
    for (double p : inclusion) {
      m = Math.max(m, p);
    }
    return m;
  }

  /**
   * The seed of the k-th random stream of a run: a SplitMix64-style mix of both, so that neighbouring streams are
   * unrelated and each draw (or toy) is reproducible on its own.
   */
  public static long streamSeed(long seed, long k) {
    long z = seed + 0x9E3779B97F4A7C15L * (k + 1);
    z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
    z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
    return z ^ (z >>> 31);
  }

  /** Items per draw. */
  public int size() {
    return size;
  }

  /** Number of items. */
  public int items() {
    return inclusion.length;
  }

  /** The probability π_i that item i is drawn. */
  public double inclusion(int i) {
    return inclusion[i];
  }

  /**
   * The weight that item i carries when it is left out, {@code w / (1 − π_i)} (0 for an item drawn every time,
   * which is never left out).
   */
  public double horvitzThompson(int i, double w) {
    return certain[i] ? 0.0 : w / (1 - inclusion[i]);
  }

  /**
   * One draw: the drawn items' indices in {@code out[0..n)}, in the draw's random order. The result depends only
   * on the generator's state, not on earlier draws.
   *
   * @param rng the random stream (consumes one shuffle of all items and one start)
   * @param order scratch of length {@link #items()}
   * @param out receives the n drawn indices (length ≥ n)
   */
  public void draw(UniformRandomProvider rng, int[] order, int[] out) {
    int items = inclusion.length;
    for (int i = 0; i < items; i++) {
      order[i] = i;
    }
    PermutationSampler.shuffle(rng, order);
    long next = rng.nextLong(ONE);
    long cumulated = 0;
    int k = 0;
    for (int p = 0; p < items; p++) {
      int i = order[p];
      if (certain[i]) {
        out[k++] = i;
        continue;
      }
      cumulated += ticks[i];
      // A stretch is at most one unit long, so it holds at most one of the points u + j.
      if (cumulated > next) {
        out[k++] = i;
        next += ONE;
      }
    }
    if (k != size) {
      throw new IllegalStateException("drew " + k + " items instead of " + size);
    }
  }
}
