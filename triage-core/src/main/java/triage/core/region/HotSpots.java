package triage.core.region;

import java.util.ArrayList;
import java.util.Comparator;
import java.util.List;
import triage.core.inference.CountingSignificance;
import triage.core.inference.Significance;

/**
 * A hot-spot scan of a 2D map (for example two detector coordinates): every square of 1×1 up to {@code maxSize}
 * × {@code maxSize} cells is a candidate; its local p-value is the one-sided Z_Bi p-value of the observed count
 * against the reference yield with its MC error. The best squares are reported with the trials correction
 * {@code min(1, trials × p_local)} (Bonferroni over every square tried; conservative, since overlapping squares
 * are correlated). Squares without reference events are not tried (no expectation to compare with); their
 * observed events are counted in {@link Result#observedWithoutReference()} so nothing is silently dropped.
 * Cost: two-dimensional prefix sums, then {@code O(cells × sizes)}.
 */
public final class HotSpots {
  private HotSpots() {
    // no instance
  }

  /**
   * One square of cells.
   *
   * @param x first column index
   * @param y first row index
   * @param size side in cells
   * @param observed observed count
   * @param expected reference yield
   * @param expectedError √Σw²
   * @param localP one-sided Z_Bi p-value
   * @param localZ its Z
   * @param globalP {@code min(1, trials × localP)}
   * @param globalZ its Z
   */
  public record Spot(int x, int y, int size, long observed, double expected, double expectedError, double localP,
      double localZ, double globalP, double globalZ) {}

  /**
   * The scan's answer.
   *
   * @param spots the best non-overlapping squares, most significant first
   * @param trials squares tried
   * @param observedWithoutReference observed events in cells with no reference events
   */
  public record Result(List<Spot> spots, int trials, long observedWithoutReference) {}

  /**
   * Scans a map.
   *
   * @param n observed counts {@code [x][y]}
   * @param b reference yields
   * @param b2 sums of squared reference weights
   * @param maxSize the largest square side tried, at least 1
   * @param keep how many squares to report
   * @return the hot spots
   */
  public static Result scan(long[][] n, double[][] b, double[][] b2, int maxSize, int keep) {
    int nx = n.length;
    int ny = nx == 0 ? 0 : n[0].length;
    if (maxSize < 1) {
      throw new IllegalArgumentException("the largest square must be at least 1 cell, got " + maxSize);
    }
    long[][] pn = new long[nx + 1][ny + 1];
    double[][] pb = new double[nx + 1][ny + 1];
    double[][] pb2 = new double[nx + 1][ny + 1];
    // Cells holding reference events, counted exactly: rounding leftovers of the weight prefix sums must not make
    // a square without reference look like one with a tiny expectation.
    long[][] pc = new long[nx + 1][ny + 1];
    long orphan = 0;
    for (int i = 0; i < nx; i++) {
      for (int j = 0; j < ny; j++) {
        pn[i + 1][j + 1] = n[i][j] + pn[i][j + 1] + pn[i + 1][j] - pn[i][j];
        pb[i + 1][j + 1] = b[i][j] + pb[i][j + 1] + pb[i + 1][j] - pb[i][j];
        pb2[i + 1][j + 1] = b2[i][j] + pb2[i][j + 1] + pb2[i + 1][j] - pb2[i][j];
        pc[i + 1][j + 1] = (b2[i][j] > 0 ? 1 : 0) + pc[i][j + 1] + pc[i + 1][j] - pc[i][j];
        orphan += b2[i][j] > 0 ? 0 : n[i][j];
      }
    }
    List<double[]> tried = new ArrayList<>();
    for (int size = 1; size <= Math.min(maxSize, Math.min(nx, ny)); size++) {
      for (int i = 0; i + size <= nx; i++) {
        for (int j = 0; j + size <= ny; j++) {
          long count = pn[i + size][j + size] - pn[i][j + size] - pn[i + size][j] + pn[i][j];
          double exp = pb[i + size][j + size] - pb[i][j + size] - pb[i + size][j] + pb[i][j];
          double var = pb2[i + size][j + size] - pb2[i][j + size] - pb2[i + size][j] + pb2[i][j];
          long cells = pc[i + size][j + size] - pc[i][j + size] - pc[i + size][j] + pc[i][j];
          if (cells == 0 || !(exp > 0 && var > 0)) {
            continue;
          }
          CountingSignificance.ZBiResult z = CountingSignificance.zBiFromBackground(count, exp, Math.sqrt(var));
          tried.add(new double[] {i, j, size, count, exp, Math.sqrt(var), z.pValue(), z.z()});
        }
      }
    }
    int trials = tried.size();
    tried.sort(Comparator.comparingDouble((double[] t) -> t[7]).reversed());
    List<Spot> spots = new ArrayList<>();
    for (double[] t : tried) {
      if (spots.size() >= keep) {
        break;
      }
      boolean overlaps = spots.stream().anyMatch(s -> t[0] < s.x() + s.size() && s.x() < t[0] + t[2]
          && t[1] < s.y() + s.size() && s.y() < t[1] + t[2]);
      if (!overlaps) {
        double global = Math.min(1, trials * t[6]);
        spots.add(new Spot((int) t[0], (int) t[1], (int) t[2], (long) t[3], t[4], t[5], t[6], t[7], global,
            Significance.zFromP(global)));
      }
    }
    return new Result(List.copyOf(spots), trials, orphan);
  }
}
