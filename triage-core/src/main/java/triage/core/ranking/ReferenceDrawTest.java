package triage.core.ranking;

import java.util.stream.IntStream;
import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import triage.core.stats.ProportionalDraw;

/**
 * Westfall–Young maxT p-values for the weighted Kolmogorov–Smirnov distances between n observed events (weight one)
 * and a weighted reference sample, with the null distribution drawn from the reference itself. Used when the
 * reference weights differ from event to event, where relabelling the pooled events is not a valid permutation test
 * (the weights would travel with the events, and a relabelled "observed" group of small-weight reference events and
 * unit-weight observed events has a far smaller effective size than the real one, so the relabelled distances are
 * far too large and the p-values close to one).
 *
 * <p>Each null draw takes n distinct reference events with probability proportional to |w| (randomised systematic
 * sampling, {@link ProportionalDraw}) as pseudo-observed events of weight sign(w), and keeps the events not drawn as
 * the pseudo-reference, each weighted {@code w / (1 − π)} (Horvitz–Thompson) so that it still estimates the whole
 * reference without bias; the pseudo-observed events are distinct from it, as the real ones are. The same draw
 * serves every feature, which is what the maxT adjustment needs. Because the pseudo-reference is the rest of the
 * reference, it moves against the pseudo-observed sample as the reference's own fluctuation would (to first order
 * in the drawn share), as in a permutation test. Where single events carry too much of the weight (π above
 * {@value #MAX_INCLUSION}, or n above {@value #MAX_SHARE_OF_EFFECTIVE} N_eff) the draws cannot stand for the null
 * and no p-value is given. p-values are {@code (1 + #{b : T^(b) ≥ T})/(B + 1)} as in
 * {@link MaxTPermutationTest}, with the same tie tolerance.
 *
 * <p>Approximate: the draws come from the reference, not from the unknown true distribution, so the p-values hold
 * to the extent that the reference is much larger than n; {@link FeatureRanking} uses it only when the reference
 * has at least twice as many events as there are observed events. Draw b uses its own random stream (SplitMix64
 * seeded with a mix of the seed and b), and features are combined in a fixed order, so results do not depend on
 * the number of threads.
 */
final class ReferenceDrawTest {
  /** Draws per pass over a feature's sorted values. */
  private static final int BLOCK = 8;

  /** Largest inclusion probability of a reference event for which null draws are made. */
  static final double MAX_INCLUSION = 0.2;

  /** Largest observed count, as a share of the reference's effective size, for which null draws are made. */
  static final double MAX_SHARE_OF_EFFECTIVE = 0.2;

  /** Relative tie tolerance, as in {@link MaxTPermutationTest}. */
  private static final double TIE_RELATIVE = 1e-12;

  private ReferenceDrawTest() {
    // no instance
  }

  /**
   * @param statistics the observed distance per feature
   * @param reference reference values, {@code reference[f][j]}
   * @param weights reference weights (finite, any sign, not all zero)
   * @param observedCount n, the number of observed events
   * @param draws B, at least 1
   * @param seed seed of the draws
   * @return raw and maxT-adjusted p-values, or null when the weights are too concentrated for null draws (an
   *     inclusion probability above {@value #MAX_INCLUSION}, or n above {@value #MAX_SHARE_OF_EFFECTIVE} of the
   *     effective size (Σw)²/Σw²)
   */
  static MaxTPermutationTest.Result test(double[] statistics, double[][] reference, double[] weights,
      int observedCount, int draws, long seed) {
    final int nf = statistics.length;
    final int n = weights.length;
    final double[] size = new double[n];
    for (int i = 0; i < n; i++) {
      size[i] = Math.abs(weights[i]);
    }
    final ProportionalDraw plan = ProportionalDraw.plan(size, observedCount);
    // Where the draws cannot stand for the null, give no p-value: an event drawn every time (or nearly) sits in
    // every pseudo-observed sample and leaves the pseudo-reference, which then describes another distribution or
    // has a tiny effective size (a review found 53% and 0% of null p-values at or below 0.05 for such weights).
    double sum = 0;
    double sum2 = 0;
    for (double w : weights) {
      sum += w;
      sum2 += w * w;
    }
    final double effective = sum * sum / sum2;
    if (plan.largestInclusion() > MAX_INCLUSION || observedCount > MAX_SHARE_OF_EFFECTIVE * effective) {
      return null;
    }
    // No rescaling of the null distances: the pseudo-reference is the rest of the reference, so it moves against
    // the pseudo-observed sample, and to first order in the drawn share f the distance's variance is
    // (1/n)(1 − f)(1 + f)² ≈ 1/n + f/n, which is the real 1/n + 1/N_eff. (A rescaling by √(1 + n/N_eff) on top was
    // tried and made the p-values conservative: mean 0.57 instead of 0.505 over 400 null datasets.)
    final double[] u = new double[n];
    final double[] v = new double[n];
    for (int i = 0; i < n; i++) {
      u[i] = Math.signum(weights[i]);
      v[i] = plan.horvitzThompson(i, weights[i]);
    }
    final int[][] order = new int[nf][];
    final double[][] sortedU = new double[nf][n];
    final double[][] sortedV = new double[nf][n];
    final boolean[][] runEnd = new boolean[nf][n];
    IntStream.range(0, nf).parallel().forEach(f -> {
      final double[] x = reference[f];
      order[f] = IndexSort.order(x);
      for (int p = 0; p < n; p++) {
        sortedU[f][p] = u[order[f][p]];
        sortedV[f][p] = v[order[f][p]];
        runEnd[f][p] = p == n - 1 || x[order[f][p + 1]] != x[order[f][p]];
      }
    });
    double all = 0;
    for (int i = 0; i < n; i++) {
      all += v[i];
    }
    final double totalV = all;
    final double[] threshold = new double[nf];
    for (int f = 0; f < nf; f++) {
      threshold[f] = statistics[f] - Math.abs(statistics[f]) * TIE_RELATIVE - Double.MIN_NORMAL;
    }
    final long[] rawCount = new long[nf];
    final long[] maxCount = new long[nf];
    final byte[] packed = new byte[n];
    final double[][] drawn = new double[BLOCK][];
    final double[] a = new double[BLOCK];
    final double[] c = new double[BLOCK];
    final double[][] d = new double[nf][BLOCK];
    // one shuffle scratch per lane, reused by every block (a draw resets it, so results do not depend on reuse)
    final int[][] scratch = new int[BLOCK][n];
    for (int b0 = 0; b0 < draws; b0 += BLOCK) {
      triage.core.Cancellation.check();
      final int nb = Math.min(BLOCK, draws - b0);
      final int first = b0;
      // The block's draws, each from its own stream (in parallel: they do not depend on each other).
      final int[][] chosen = new int[nb][observedCount];
      IntStream.range(0, nb).parallel().forEach(j -> {
        UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(ProportionalDraw.streamSeed(seed, first + j));
        plan.draw(rng, scratch[j], chosen[j]);
      });
      java.util.Arrays.fill(packed, (byte) 0);
      for (int j = 0; j < nb; j++) {
        double so = 0;
        double sv = 0;
        for (int i : chosen[j]) {
          packed[i] |= (byte) (1 << j);
          so += u[i];
          sv += v[i];
        }
        // Per draw: 1/Σ_drawn u and 1/Σ_left v; a group without positive weight has no distance (NaN below).
        a[j] = so > 0 ? 1 / so : Double.NaN;
        c[j] = totalV - sv > 0 ? 1 / (totalV - sv) : Double.NaN;
      }
      for (int j = nb; j < BLOCK; j++) {
        a[j] = 0;
        c[j] = 0;
      }
      IntStream.range(0, nf).parallel().forEach(f -> KsBlock.best().runDraws(order[f], sortedU[f], sortedV[f],
          runEnd[f], packed, a, c, d[f]));
      for (int j = 0; j < nb; j++) {
        double max = Double.NEGATIVE_INFINITY;
        for (int f = 0; f < nf; f++) {
          // No defined distance counts as at least as extreme (conservative), never as left out.
          final double dj = Double.isNaN(d[f][j]) ? Double.POSITIVE_INFINITY : d[f][j];
          if (dj >= threshold[f]) {
            rawCount[f]++;
          }
          max = Math.max(max, dj);
        }
        for (int f = 0; f < nf; f++) {
          if (max >= threshold[f]) {
            maxCount[f]++;
          }
        }
      }
    }
    final double[] raw = new double[nf];
    final double[] adj = new double[nf];
    for (int f = 0; f < nf; f++) {
      raw[f] = (rawCount[f] + 1.0) / (draws + 1.0);
      adj[f] = (maxCount[f] + 1.0) / (draws + 1.0);
    }
    return new MaxTPermutationTest.Result(statistics, raw, adj, draws);
  }

}
