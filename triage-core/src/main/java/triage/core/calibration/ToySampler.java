package triage.core.calibration;

import java.util.Arrays;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.distribution.PoissonSampler;
import org.apache.commons.rng.simple.RandomSource;

/**
 * Draws one toy from a weighted reference sample: n ~ Poisson(N_exp) events, chosen with probability proportional
 * to weight and without replacement (the Efraimidis–Spirakis method: each event gets the key ln(u)/w with u uniform
 * on (0, 1), and the n largest keys are taken; P. S. Efraimidis and P. G. Spirakis, "Weighted random sampling with
 * a reservoir", Inf. Process. Lett. 97 (2006) 181–185, doi:10.1016/j.ipl.2005.11.003). The events not chosen form
 * the toy's reference.
 *
 * <p>The random stream of toy k is SplitMix64 seeded with a mix of the run seed and k, so every toy is reproducible
 * on its own and shards of toy indices are disjoint.
 *
 * <ul>
 *   <li>Weights must be positive; zero and negative weights cannot be sampled and are refused.</li>
 *   <li>n is capped at the reference size (then every event is chosen and the toy's reference is empty, which the
 *   caller must refuse).</li>
 * </ul>
 */
public final class ToySampler {
  private ToySampler() {
    // no instance
  }

  /**
   * One toy's partition of the reference.
   *
   * @param observed indices of the events drawn as the toy's observed sample, ascending
   * @param reference indices of the rest, ascending
   */
  public record Toy(int[] observed, int[] reference) {}

  /** The seed of toy k in a run: a SplitMix64-style mix of both, so neighbouring toys are unrelated. */
  public static long toySeed(long runSeed, long toy) {
    long z = runSeed + 0x9E3779B97F4A7C15L * (toy + 1);
    z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
    z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
    return z ^ (z >>> 31);
  }

  /**
   * Draws toy k.
   *
   * @param weights reference weights (positive)
   * @param expected N_exp, the mean number of toy events
   * @param runSeed the run seed
   * @param toy the toy index
   */
  public static Toy draw(double[] weights, double expected, long runSeed, long toy) {
    if (!(expected > 0)) {
      throw new IllegalArgumentException("expected count " + expected + " is not positive");
    }
    UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(toySeed(runSeed, toy));
    int n = (int) Math.min(weights.length, PoissonSampler.of(rng, expected).sample());
    double[] keys = new double[weights.length];
    for (int i = 0; i < weights.length; i++) {
      double w = weights[i];
      if (!(w > 0)) {
        throw new IllegalArgumentException("reference weight " + w + " at event " + i
            + " cannot be sampled: toys need positive weights");
      }
      // ln(u)/w with u in (0, 1]: nextDouble() is in [0, 1), so 1 − it is in (0, 1].
      keys[i] = Math.log(1 - rng.nextDouble()) / w;
    }
    double threshold;
    if (n == 0) {
      threshold = Double.POSITIVE_INFINITY;
    } else {
      double[] sorted = keys.clone();
      Arrays.sort(sorted);
      threshold = sorted[weights.length - n];
    }
    int[] observed = new int[n];
    int[] reference = new int[weights.length - n];
    int no = 0;
    int nr = 0;
    for (int i = 0; i < keys.length; i++) {
      // Keys are continuous, so ties at the threshold have probability zero; guard the count anyway.
      if (keys[i] >= threshold && no < n) {
        observed[no++] = i;
      } else {
        reference[nr++] = i;
      }
    }
    return new Toy(Arrays.copyOf(observed, no), Arrays.copyOf(reference, nr + (n - no)));
  }
}
