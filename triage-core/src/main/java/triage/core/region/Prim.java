package triage.core.region;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import triage.core.inference.CountingSignificance;

/**
 * A box region found by the Patient Rule Induction Method ("Bump hunting in high-dimensional data",
 * Statistics and Computing 9 (1999) 123–143), maximising the significance of the observed
 * events over the expected reference yield in the box, followed by pruning to a few readable cuts.
 *
 * <ul>
 *   <li>Peeling: from the box holding everything, each step considers, for every feature, removing the fraction
 *   α of the box's observed events at the low or at the high end, and keeps the peel giving the highest Z; a
 *   candidate that removes no observed event (ties at the end) or leaves no reference yield is not considered.
 *   It stops when the box would hold fewer than the minimum support (a fraction of all observed events) or no
 *   candidate is left. The best box of the trajectory is kept.</li>
 *   <li>Pasting: of the faces of that box, each moved out by α of its observed events, the one giving the
 *   highest Z is taken, while that raises Z.</li>
 *   <li>Pruning: the cut whose removal lowers Z least is dropped while the loss is below the tolerance, and
 *   always while there are more cuts than allowed.</li>
 * </ul>
 * Z is Z_Bi with the reference's MC error (Nucl. Instrum. Meth. A 595 (2008) 480). It is optimised on the data it is
 * computed on, so it is biased upwards: a region found here must be frozen and checked on independent data.
 */
public final class Prim {
  /**
   * Settings.
   *
   * @param alpha peeling and pasting fraction (default 0.05, as in the literature's defaults)
   * @param minSupport smallest fraction of all observed events a box may keep (default 0.002)
   * @param minObserved smallest number of observed events a box may keep (default 10)
   * @param pruneTolerance largest loss of Z accepted when dropping a cut (default 0.25: a cut that buys less than
   *     a quarter of a standard deviation is not worth reading, and is often a fluctuation the peeling chased)
   * @param maxCuts the most cuts kept
   */
  public record Settings(double alpha, double minSupport, int minObserved, double pruneTolerance, int maxCuts) {
    /** Checks the ranges. */
    public Settings {
      if (!(alpha > 0 && alpha < 0.5) || !(minSupport > 0 && minSupport < 1) || minObserved < 1
          || !(pruneTolerance >= 0) || maxCuts < 1) {
        throw new IllegalArgumentException("PRIM needs 0 < alpha < 0.5, 0 < min support < 1, min observed ≥ 1, "
            + "prune tolerance ≥ 0 and max cuts ≥ 1");
      }
    }

    /** α 0.05, support 0.2%, 10 events, tolerance 0.25, 4 cuts. */
    public static Settings defaults() {
      return new Settings(0.05, 0.002, 10, 0.25, 4);
    }
  }

  /**
   * One cut of the result and what it does.
   *
   * @param feature the feature index
   * @param lo the lower bound (−∞ if none)
   * @param hi the upper bound (+∞ if none)
   * @param zWithout Z of the box without this cut
   * @param observedWithout observed events without it
   * @param expectedWithout expected yield without it
   */
  public record Cut(int feature, double lo, double hi, double zWithout, long observedWithout,
      double expectedWithout) {}

  /**
   * The box found.
   *
   * @param cuts the cuts kept
   * @param observed observed events in the box
   * @param expected expected yield in it
   * @param expectedStatError its MC error
   * @param z Z_Bi of the box (optimised on these data)
   * @param peels peeling steps taken
   */
  public record Result(List<Cut> cuts, long observed, double expected, double expectedStatError, double z,
      int peels) {}

  private Prim() {
    // no instance
  }

  /**
   * Z_Bi of n against b ± √w2; −∞ when there is no reference yield, so that such a box is never preferred (with
   * no expectation a significance is not defined, and an infinite one would win every comparison).
   */
  static double z(long n, double b, double w2) {
    if (!(b > 0) || !(w2 > 0)) {
      return Double.NEGATIVE_INFINITY;
    }
    return CountingSignificance.zBiFromBackground(n, b, Math.sqrt(w2)).z();
  }

  /**
   * Finds a box.
   *
   * @param obs observed values, {@code obs[k][i]}
   * @param ref reference values, {@code ref[k][j]}
   * @param w reference weights
   * @param s settings
   */
  public static Result find(double[][] obs, double[][] ref, double[] w, Settings s) {
    int d = obs.length;
    double[] lo = new double[d];
    double[] hi = new double[d];
    Arrays.fill(lo, Double.NEGATIVE_INFINITY);
    Arrays.fill(hi, Double.POSITIVE_INFINITY);
    int nAll = obs[0].length;
    long minKeep = Math.max(s.minObserved(), (long) Math.ceil(s.minSupport() * nAll));
    double bestZ = z(nAll, sum(w, ref, lo, hi), sum2(w, ref, lo, hi));
    double[] bestLo = lo.clone();
    double[] bestHi = hi.clone();
    int peels = 0;
    // Peeling works on the index lists of the events still in the box, so each step costs one pass per candidate
    // over a shrinking list.
    int[] oIdx = new int[nAll];
    for (int i = 0; i < nAll; i++) {
      oIdx[i] = i;
    }
    int[] rIdx = new int[w.length];
    for (int i = 0; i < w.length; i++) {
      rIdx[i] = i;
    }
    while (true) {
      triage.core.Cancellation.check();
      int n = oIdx.length;
      int remove = (int) Math.max(1, Math.floor(s.alpha() * n));
      if (n - remove < minKeep) {
        break;
      }
      double stepZ = Double.NEGATIVE_INFINITY;
      int stepK = -1;
      boolean stepLow = false;
      double stepBound = 0;
      for (int k = 0; k < d; k++) {
        double[] in = new double[n];
        for (int i = 0; i < n; i++) {
          in[i] = obs[k][oIdx[i]];
        }
        Arrays.sort(in);
        for (boolean low : new boolean[] {true, false}) {
          double bound = low ? in[remove] : in[n - 1 - remove];
          long nk = 0;
          for (int i : oIdx) {
            double v = obs[k][i];
            if (low ? v >= bound : v <= bound) {
              nk++;
            }
          }
          if (nk == n) {
            // ties at the end: this peel removes no observed event and would end the peeling
            continue;
          }
          double bk = 0;
          double b2 = 0;
          for (int j : rIdx) {
            double v = ref[k][j];
            if (low ? v >= bound : v <= bound) {
              bk += w[j];
              b2 += w[j] * w[j];
            }
          }
          double zk = z(nk, bk, b2);
          if (zk > stepZ) {
            stepZ = zk;
            stepK = k;
            stepLow = low;
            stepBound = bound;
          }
        }
      }
      if (stepK < 0) {
        break;
      }
      if (stepLow) {
        lo[stepK] = Math.max(lo[stepK], stepBound);
      } else {
        hi[stepK] = Math.min(hi[stepK], stepBound);
      }
      final int kk = stepK;
      final double bb = stepBound;
      final boolean ll = stepLow;
      oIdx = Arrays.stream(oIdx).filter(i -> ll ? obs[kk][i] >= bb : obs[kk][i] <= bb).toArray();
      rIdx = Arrays.stream(rIdx).filter(j -> ll ? ref[kk][j] >= bb : ref[kk][j] <= bb).toArray();
      peels++;
      if (stepZ > bestZ) {
        bestZ = stepZ;
        bestLo = lo.clone();
        bestHi = hi.clone();
      }
    }
    lo = bestLo;
    hi = bestHi;
    // Pasting: move out the face that raises Z most, by α of the box's observed events, while Z rises.
    boolean improved = true;
    while (improved) {
      improved = false;
      long n = count(obs, lo, hi);
      long add = Math.max(1, (long) Math.floor(s.alpha() * n));
      double current = z(n, sum(w, ref, lo, hi), sum2(w, ref, lo, hi));
      double bestPaste = current + 1e-12;
      double[] pasteLo = null;
      double[] pasteHi = null;
      for (int k = 0; k < d; k++) {
        for (boolean low : new boolean[] {true, false}) {
          double[] outside = outside(obs, k, lo, hi, low);
          if (outside.length == 0) {
            continue;
          }
          Arrays.sort(outside);
          int at = (int) Math.min(add, outside.length) - 1;
          double bound = low ? outside[outside.length - 1 - at] : outside[at];
          double[] l = lo.clone();
          double[] h = hi.clone();
          if (low) {
            l[k] = bound;
          } else {
            h[k] = bound;
          }
          double zk = z(count(obs, l, h), sum(w, ref, l, h), sum2(w, ref, l, h));
          if (zk > bestPaste) {
            bestPaste = zk;
            pasteLo = l;
            pasteHi = h;
          }
        }
      }
      if (pasteLo != null) {
        lo = pasteLo;
        hi = pasteHi;
        improved = true;
      }
    }
    // Pruning.
    while (true) {
      double current = z(count(obs, lo, hi), sum(w, ref, lo, hi), sum2(w, ref, lo, hi));
      int cuts = 0;
      double bestLoss = Double.POSITIVE_INFINITY;
      int bestK = -1;
      boolean bestIsLow = false;
      for (int k = 0; k < d; k++) {
        for (boolean low : new boolean[] {true, false}) {
          if (low ? lo[k] == Double.NEGATIVE_INFINITY : hi[k] == Double.POSITIVE_INFINITY) {
            continue;
          }
          cuts++;
          double[] l = lo.clone();
          double[] h = hi.clone();
          if (low) {
            l[k] = Double.NEGATIVE_INFINITY;
          } else {
            h[k] = Double.POSITIVE_INFINITY;
          }
          double loss = current - z(count(obs, l, h), sum(w, ref, l, h), sum2(w, ref, l, h));
          if (loss < bestLoss) {
            bestLoss = loss;
            bestK = k;
            bestIsLow = low;
          }
        }
      }
      if (bestK < 0 || (bestLoss > s.pruneTolerance() && cuts <= s.maxCuts())) {
        break;
      }
      if (bestIsLow) {
        lo[bestK] = Double.NEGATIVE_INFINITY;
      } else {
        hi[bestK] = Double.POSITIVE_INFINITY;
      }
    }
    List<Cut> cuts = new ArrayList<>();
    for (int k = 0; k < d; k++) {
      if (lo[k] != Double.NEGATIVE_INFINITY || hi[k] != Double.POSITIVE_INFINITY) {
        double[] l = lo.clone();
        double[] h = hi.clone();
        l[k] = Double.NEGATIVE_INFINITY;
        h[k] = Double.POSITIVE_INFINITY;
        long nw = count(obs, l, h);
        double bw = sum(w, ref, l, h);
        cuts.add(new Cut(k, lo[k], hi[k], z(nw, bw, sum2(w, ref, l, h)), nw, bw));
      }
    }
    long n = count(obs, lo, hi);
    double b = sum(w, ref, lo, hi);
    double w2 = sum2(w, ref, lo, hi);
    return new Result(cuts, n, b, Math.sqrt(w2), z(n, b, w2), peels);
  }

  private static boolean inside(double[][] x, int i, double[] lo, double[] hi) {
    for (int k = 0; k < x.length; k++) {
      double v = x[k][i];
      if (v < lo[k] || v > hi[k]) {
        return false;
      }
    }
    return true;
  }

  static long count(double[][] x, double[] lo, double[] hi) {
    long n = 0;
    for (int i = 0; i < x[0].length; i++) {
      if (inside(x, i, lo, hi)) {
        n++;
      }
    }
    return n;
  }

  private static double sum(double[] w, double[][] x, double[] lo, double[] hi) {
    double s = 0;
    for (int i = 0; i < w.length; i++) {
      if (inside(x, i, lo, hi)) {
        s += w[i];
      }
    }
    return s;
  }

  private static double sum2(double[] w, double[][] x, double[] lo, double[] hi) {
    double s = 0;
    for (int i = 0; i < w.length; i++) {
      if (inside(x, i, lo, hi)) {
        s += w[i] * w[i];
      }
    }
    return s;
  }

  /** Values of feature k for observed events inside the box. */
  private static double[] inBox(double[][] x, int k, double[] lo, double[] hi) {
    double[] out = new double[x[0].length];
    int n = 0;
    for (int i = 0; i < x[0].length; i++) {
      if (inside(x, i, lo, hi)) {
        out[n++] = x[k][i];
      }
    }
    return Arrays.copyOf(out, n);
  }

  /** Values of feature k for observed events just outside one face (inside every other bound). */
  private static double[] outside(double[][] x, int k, double[] lo, double[] hi, boolean low) {
    double[] l = lo.clone();
    double[] h = hi.clone();
    if (low) {
      l[k] = Double.NEGATIVE_INFINITY;
      h[k] = Math.nextDown(lo[k]);
    } else {
      l[k] = Math.nextUp(hi[k]);
      h[k] = Double.POSITIVE_INFINITY;
    }
    if (low ? lo[k] == Double.NEGATIVE_INFINITY : hi[k] == Double.POSITIVE_INFINITY) {
      return new double[0];
    }
    return inBox(x, k, l, h);
  }
}
