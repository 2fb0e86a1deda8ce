package triage.core.region;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import triage.core.inference.CountingSignificance;
import triage.core.inference.Significance;

/**
 * A sliding-window scan of one feature: the window {@code [lo, hi)} of contiguous bins where the observed count
 * stands furthest above the weighted reference, by Z_Bi with the reference's MC statistical error √Σw².
 *
 * <p>The scan looks at every window of {@code minBins..maxBins} contiguous bins on a fixed grid, so the best
 * window's significance is local: it was picked out of {@link Result#windowsTried()} windows. The global p-value
 * given beside it is the Bonferroni bound {@code min(1, trials × p_local)}, which is conservative here because
 * overlapping windows are strongly correlated; a calibrated look-elsewhere correction needs pseudo-experiments.
 * Bins and prefix sums are primitive arrays; the scan costs one pass over the events plus
 * {@code O(bins × widths)}.
 */
public final class WindowScan {
  /** The most windows one scan compares. */
  public static final long MAX_WINDOWS = 1_000_000;

  private WindowScan() {
    // no instance
  }

  /**
   * The grid and the widths scanned.
   *
   * @param lo lower edge of the first bin
   * @param hi upper edge of the last bin
   * @param bins number of equal bins in {@code [lo, hi)}
   * @param minBins narrowest window, in bins
   * @param maxBins widest window, in bins
   */
  public record Grid(double lo, double hi, int bins, int minBins, int maxBins) {
    /** Checks the grid. */
    public Grid {
      if (!(Double.isFinite(lo) && Double.isFinite(hi) && hi > lo)) {
        throw new IllegalArgumentException("the scan range must be finite with lo < hi, got " + lo + ":" + hi);
      }
      if (bins < 1 || bins > 100_000) {
        throw new IllegalArgumentException("the number of bins must be in 1..100000, got " + bins);
      }
      if (minBins < 1 || maxBins < minBins || maxBins > bins) {
        throw new IllegalArgumentException("window widths must satisfy 1 <= min <= max <= bins (" + bins
            + "), got " + minBins + ".." + maxBins);
      }
      if ((long) bins * (maxBins - minBins + 1) > MAX_WINDOWS) {
        throw new IllegalArgumentException("at most " + MAX_WINDOWS + " windows may be tried: fewer bins or "
            + "widths, please (" + bins + " bins × " + (maxBins - minBins + 1) + " widths)");
      }
    }

    /** Upper edge of bin {@code k - 1}, i.e. edge number k. */
    public double edge(int k) {
      return k == bins ? hi : lo + (hi - lo) * k / bins;
    }

    /** Number of windows on the grid: {@code Σ_{k=min..max} (bins − k + 1)} (those without reference are skipped). */
    public int windows() {
      int n = 0;
      for (int k = minBins; k <= maxBins; k++) {
        n += bins - k + 1;
      }
      return n;
    }
  }

  /**
   * One window.
   *
   * @param lo lower edge (inclusive)
   * @param hi upper edge (exclusive, inclusive for the last bin of the grid)
   * @param observed observed events inside
   * @param expected Σw of the reference inside
   * @param expectedError √Σw² inside
   * @param localP the one-sided Z_Bi p-value of this window alone
   * @param localZ its Z_Bi (negative infinity when the window has no reference events)
   */
  public record Window(double lo, double hi, long observed, double expected, double expectedError, double localP,
      double localZ) {}

  /**
   * The scan's answer.
   *
   * @param best the window with the largest local Z (the first on ties, lowest edge then narrowest)
   * @param top the best few non-overlapping windows, best first (the best included)
   * @param windowsTried how many windows were compared
   * @param bonferroniP {@code min(1, windowsTried × best.localP)}
   * @param bonferroniZ its Z (one-sided)
   * @param outsideRange observed events outside the grid (not scanned, counted so nothing is silently dropped)
   * @param observedWithoutReference observed events in bins without reference events: no expectation to compare
   *     with, so windows made only of such bins are not tried
   */
  public record Result(Window best, List<Window> top, int windowsTried, double bonferroniP, double bonferroniZ,
      long outsideRange, long observedWithoutReference) {}

  /**
   * Scans one feature.
   *
   * @param observed the observed values (unit weight)
   * @param reference the reference values
   * @param weights the reference weights, normalised to the observed expectation
   * @param grid the grid and widths
   * @param keep how many non-overlapping windows to report
   * @return the best window and the look-elsewhere bound
   */
  public static Result scan(double[] observed, double[] reference, double[] weights, Grid grid, int keep) {
    if (reference.length != weights.length) {
      throw new IllegalArgumentException("reference values and weights differ in length");
    }
    int nb = grid.bins();
    long[] n = new long[nb + 1];
    long[] refCount = new long[nb + 1];
    double[] b = new double[nb + 1];
    double[] b2 = new double[nb + 1];
    long outside = 0;
    for (double x : observed) {
      int k = bin(grid, x);
      if (k < 0) {
        outside++;
      } else {
        n[k + 1]++;
      }
    }
    for (int i = 0; i < reference.length; i++) {
      int k = bin(grid, reference[i]);
      if (k >= 0) {
        refCount[k + 1]++;
        b[k + 1] += weights[i];
        b2[k + 1] += weights[i] * weights[i];
      }
    }
    long orphan = 0;
    for (int k = 1; k <= nb; k++) {
      orphan += refCount[k] == 0 ? n[k] : 0;
    }
    for (int k = 1; k <= nb; k++) {
      n[k] += n[k - 1];
      refCount[k] += refCount[k - 1];
      b[k] += b[k - 1];
      b2[k] += b2[k - 1];
    }
    List<Window> all = new ArrayList<>();
    for (int start = 0; start < nb; start++) {
      for (int width = grid.minBins(); width <= grid.maxBins() && start + width <= nb; width++) {
        int end = start + width;
        double exp = b[end] - b[start];
        double err = Math.sqrt(Math.max(0, b2[end] - b2[start]));
        if (refCount[end] == refCount[start] || !(exp > 0 && err > 0)) {
          continue;
        }
        long count = n[end] - n[start];
        CountingSignificance.ZBiResult r = CountingSignificance.zBiFromBackground(count, exp, err);
        all.add(new Window(grid.edge(start), grid.edge(end), count, exp, err, r.pValue(), r.z()));
      }
    }
    if (all.isEmpty()) {
      throw new IllegalArgumentException("no window of the grid holds reference events: nothing to compare with");
    }
    List<Window> sorted = new ArrayList<>(all);
    sorted.sort(Comparator.comparingDouble(Window::localZ).reversed());
    Window best = sorted.get(0);
    List<Window> top = new ArrayList<>();
    for (Window w : sorted) {
      if (top.size() >= Math.max(1, keep)) {
        break;
      }
      if (top.stream().noneMatch(t -> w.lo() < t.hi() && t.lo() < w.hi())) {
        top.add(w);
      }
    }
    int trials = all.size();
    double pGlobal = Math.min(1, trials * best.localP());
    return new Result(best, List.copyOf(top), trials, pGlobal, Significance.zFromP(pGlobal), outside, orphan);
  }

  /** The bin of x, or −1 outside {@code [lo, hi]} (the upper edge belongs to the last bin). */
  private static int bin(Grid g, double x) {
    if (!(x >= g.lo() && x <= g.hi())) {
      return -1;
    }
    int k = Math.min((int) ((x - g.lo()) / (g.hi() - g.lo()) * g.bins()), g.bins() - 1);
    // The division may round across an edge: the reported edges decide (a value on edge k belongs to bin k).
    if (k + 1 < g.bins() && x >= g.edge(k + 1)) {
      k++;
    } else if (k > 0 && x < g.edge(k)) {
      k--;
    }
    return k;
  }
}
