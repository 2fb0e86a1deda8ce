package triage.core.calibration;

import java.util.Arrays;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.sampling.distribution.PoissonSampler;
import org.apache.commons.rng.simple.RandomSource;
import triage.core.stats.ProportionalDraw;

/**
 * Draws one toy from a weighted reference sample: n ~ Poisson(N_exp) events, chosen without replacement so that
 * event i is in the toy with probability exactly π_i = n w_i / Σw, proportional to its weight (randomised
 * systematic sampling, {@link ProportionalDraw}; "Sampling with unequal probabilities and without replacement",
 * Ann. Math. Statist. 33 (1962) 350). The events not chosen form the toy's reference, each weighted
 * w_i / (1 − π_i) (Horvitz–Thompson), so that the toy's reference still describes the reference density without
 * bias; the caller then renormalises it to N_exp.
 *
 * <p>Why not simply draw events one after another with probability proportional to weight: such successive
 * sampling does not give inclusion probabilities proportional to weight (heavy events are under-drawn once the
 * toy is a noticeable fraction of the reference), and the rest, left with its plain weights, is depleted of heavy
 * events; with weights 0.01 and 0.1 and a toy of 2% of the events, the heavy events' share came out 0.516 in the
 * toys and 0.503 in their references instead of 0.526, in every toy, so the toys were not null samples.
 *
 * <p>The random stream of toy k is SplitMix64 seeded with a mix of the run seed and k, so every toy is reproducible
 * on its own and shards of toy indices are disjoint.
 *
 * <ul>
 *   <li>Weights must be positive; zero and negative weights cannot be sampled and are refused
 *   ({@link #requirePositiveWeights}, an input error that says what to do).</li>
 *   <li>n is capped at the reference size (then every event is chosen and the toy's reference is empty, which the
 *   caller must refuse). Events whose π would reach 1 are always drawn (and the rest re-planned).</li>
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
   * @param referenceWeights the weights of the rest, w_i / (1 − π_i), in the order of {@code reference}
   */
  public record Toy(int[] observed, int[] reference, double[] referenceWeights) {}

  /** The seed of toy k in a run: a SplitMix64-style mix of both, so neighbouring toys are unrelated. */
  public static long toySeed(long runSeed, long toy) {
    return ProportionalDraw.streamSeed(runSeed, toy);
  }

  /**
   * Refuses a reference that toys cannot be drawn from: one with a weight that is zero, negative or not finite.
   * A toy draws each event with probability proportional to its weight and keeps the rest at w/(1 − π), so a
   * weight of zero or less has no probability to be drawn with, and the toys would not be samples of the
   * reference's (signed) distribution. Called before any toy is fitted, so a refusal writes nothing.
   *
   * @param weights the reference weights
   * @throws triage.core.sample.InputException naming how many weights are at fault and the first one, and what the
   *     analyst can do
   */
  public static void requirePositiveWeights(double[] weights) {
    int negative = 0;
    int zero = 0;
    int first = -1;
    for (int i = 0; i < weights.length; i++) {
      double w = weights[i];
      if (!(w > 0) || Double.isInfinite(w)) {
        negative += w < 0 ? 1 : 0;
        zero += w == 0 ? 1 : 0;
        first = first < 0 ? i : first;
      }
    }
    if (first >= 0) {
      throw new triage.core.sample.InputException(null, String.format(java.util.Locale.ROOT,
          "toys need every reference weight positive, and this reference has %d negative and %d zero weights "
          + "(the first: w = %s): a toy draws its events from the reference with probability "
          + "proportional to weight, and a weight of zero or less cannot be drawn with, so such toys would not be "
          + "null samples. To calibrate, ingest a reference with positive weights only (e.g. with the negative-"
          + "weight events merged into nearby positive ones beforehand, or set aside by an ingest without "
          + "--allow-negative-weights and with --on-bad-row skip, which changes the expected yield by their Σw)",
          negative, zero, weights[first]));
    }
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
    requirePositiveWeights(weights);
    UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(toySeed(runSeed, toy));
    int n = (int) Math.min(weights.length, PoissonSampler.of(rng, expected).sample());
    double total = 0;
    double heaviest = 0;
    for (double w : weights) {
      total += w;
      heaviest = Math.max(heaviest, w);
    }
    if (expected * heaviest >= total) {
      // an event that is in every toy (and never in a toy's reference) gives every toy a built-in excess there
      throw new triage.core.sample.InputException(null, "a reference event carries so much of the weight that it "
          + "would be in every toy (N_exp·w/Σw ≥ 1): toys drawn from this reference are not null samples; "
          + "reweight or split the heaviest events");
    }
    ProportionalDraw plan = ProportionalDraw.plan(weights, n);
    int[] observed = new int[n];
    plan.draw(rng, new int[weights.length], observed);
    Arrays.sort(observed);
    int[] reference = new int[weights.length - n];
    double[] referenceWeights = new double[reference.length];
    int no = 0;
    int nr = 0;
    for (int i = 0; i < weights.length; i++) {
      if (no < n && observed[no] == i) {
        no++;
      } else {
        reference[nr] = i;
        referenceWeights[nr] = plan.horvitzThompson(i, weights[i]);
        nr++;
      }
    }
    return new Toy(observed, reference, referenceWeights);
  }
}
