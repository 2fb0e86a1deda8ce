package triage.core.ranking;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import java.util.stream.IntStream;

/**
 * Which pairs of features set the observed events apart from the reference in two dimensions: for every pair,
 * the binned Jensen–Shannon divergence of the observed and reference 2D histograms, on a grid of reference
 * quantiles in each feature, and how much it exceeds the larger of the two features' own divergences on the same
 * bins. A large excess over the marginals means the pair shows something neither feature shows alone (a
 * correlation, or a corner of the plane).
 *
 * <p>Values outside the reference's range fall into the outermost bins. Pairs are independent, so they are
 * computed in parallel with results identical on any thread count.
 *
 * <p>Negative reference weights are treated as the one-feature measures of {@link FeatureRanking} treat them
 * ({@link NegativeWeights#ALLOW}): signed weights in the quantiles and the cell sums, the reference's total weight
 * still {@code > 0}. A divergence needs every cell's content {@code >= 0}; a pair with a cell whose reference weights
 * sum below zero has no divergence, and gets NaN for both numbers (listed after the measured pairs;
 * {@link #unmeasured} counts them) rather than a number from clipped or dropped cells.
 */
public final class FeaturePairs {
  /**
   * One pair.
   *
   * @param first the first feature (earlier in the given order)
   * @param second the second feature
   * @param jensenShannon 2D binned JS divergence, nats
   * @param beyondMarginals {@code jensenShannon − max(JS of first, JS of second)} on the same bins
   *     (both NaN when a cell of the pair's grid has negative reference content)
   */
  public record Pair(String first, String second, double jensenShannon, double beyondMarginals) {}

  private FeaturePairs() {
    // no instance
  }

  /**
   * Every pair, largest 2D divergence first.
   *
   * @param names feature names
   * @param observed observed values, {@code observed[f][i]} (weights one)
   * @param reference reference values, {@code reference[f][j]}
   * @param referenceWeights reference weights (signed; their total must be {@code > 0})
   * @param bins reference-quantile bins per feature (2 or more)
   */
  public static List<Pair> rank(List<String> names, double[][] observed, double[][] reference,
      double[] referenceWeights, int bins) {
    int nf = names.size();
    if (observed.length != nf || reference.length != nf) {
      throw new IllegalArgumentException("need " + nf + " feature columns on both sides");
    }
    if (bins < 2) {
      throw new IllegalArgumentException("need at least 2 bins per feature, not " + bins);
    }
    BinnedJensenShannon quantiles = BinnedJensenShannon.withDefaults().with(Binning.referenceQuantiles(bins))
        .with(NegativeWeights.ALLOW);
    int[][] obsCell = new int[nf][];
    int[][] refCell = new int[nf][];
    int[] size = new int[nf];
    double[] single = new double[nf];
    for (int f = 0; f < nf; f++) {
      double[] edges = quantiles.edges(reference[f], referenceWeights);
      size[f] = Math.max(1, edges.length - 1);
      obsCell[f] = cells(observed[f], edges, size[f]);
      refCell[f] = cells(reference[f], edges, size[f]);
      double[] q = counts(refCell[f], referenceWeights, size[f]);
      // A negative bin of one feature is a negative cell of every pair with it: those pairs get NaN below.
      single[f] = BinnedJensenShannon.divergenceOrNaN(counts(obsCell[f], null, size[f]), q,
          BinnedJensenShannon.LogBase.NATURAL);
    }
    int pairs = nf * (nf - 1) / 2;
    int[] firstOf = new int[pairs];
    int[] secondOf = new int[pairs];
    for (int a = 0, p = 0; a < nf; a++) {
      for (int b = a + 1; b < nf; b++, p++) {
        firstOf[p] = a;
        secondOf[p] = b;
      }
    }
    double[] js = new double[pairs];
    IntStream.range(0, pairs).parallel().forEach(p -> {
      int a = firstOf[p];
      int b = secondOf[p];
      double[] po = new double[size[a] * size[b]];
      double[] qr = new double[size[a] * size[b]];
      int[] oa = obsCell[a];
      int[] ob = obsCell[b];
      for (int i = 0; i < oa.length; i++) {
        po[oa[i] * size[b] + ob[i]] += 1;
      }
      int[] ra = refCell[a];
      int[] rb = refCell[b];
      for (int j = 0; j < ra.length; j++) {
        qr[ra[j] * size[b] + rb[j]] += referenceWeights[j];
      }
      js[p] = BinnedJensenShannon.divergenceOrNaN(po, qr, BinnedJensenShannon.LogBase.NATURAL);
    });
    List<Pair> out = new ArrayList<>(pairs);
    for (int p = 0; p < pairs; p++) {
      out.add(new Pair(names.get(firstOf[p]), names.get(secondOf[p]), js[p],
          js[p] - Math.max(single[firstOf[p]], single[secondOf[p]])));
    }
    // Largest first, unmeasured pairs (NaN) last in the given order.
    out.sort(Comparator.comparingDouble((Pair x) -> Double.isNaN(x.jensenShannon()) ? Double.NEGATIVE_INFINITY
        : x.jensenShannon()).reversed());
    return out;
  }

  /**
   * @param pairs pairs from {@link #rank}
   * @return how many have no divergence because a cell's reference weights sum below zero
   */
  public static int unmeasured(List<Pair> pairs) {
    int n = 0;
    for (Pair p : pairs) {
      n += Double.isNaN(p.jensenShannon()) ? 1 : 0;
    }
    return n;
  }

  /** The bin of each value: {@code edges[k] ≤ v < edges[k+1]}, the last bin closed, outside values clamped. */
  static int[] cells(double[] values, double[] edges, int bins) {
    int[] out = new int[values.length];
    for (int i = 0; i < values.length; i++) {
      int k = java.util.Arrays.binarySearch(edges, values[i]);
      int bin = k >= 0 ? k : -k - 2;
      out[i] = Math.max(0, Math.min(bins - 1, bin));
    }
    return out;
  }

  private static double[] counts(int[] cells, double[] weights, int bins) {
    double[] out = new double[bins];
    for (int i = 0; i < cells.length; i++) {
      out[cells[i]] += weights == null ? 1 : weights[i];
    }
    return out;
  }
}
