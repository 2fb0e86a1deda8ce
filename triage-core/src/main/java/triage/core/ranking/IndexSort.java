package triage.core.ranking;

/**
 * Stable merge sort of an index array by double keys (package-private). Keys must not be NaN; {@code -0.0} and
 * {@code 0.0} compare equal.
 */
final class IndexSort {
  private IndexSort() {
  }

  /**
   * @param keys keys (no NaN)
   * @return indices ordering the keys ascending (stable)
   */
  static int[] order(double[] keys) {
    final int n = keys.length;
    int[] a = new int[n];
    int[] b = new int[n];
    for (int i = 0; i < n; i++) {
      a[i] = i;
    }
    for (int width = 1; width < n; width *= 2) {
      for (int lo = 0; lo < n; lo += 2 * width) {
        final int mid = Math.min(lo + width, n);
        final int hi = Math.min(lo + 2 * width, n);
        int i = lo;
        int j = mid;
        int k = lo;
        while (i < mid && j < hi) {
          b[k++] = keys[a[j]] < keys[a[i]] ? a[j++] : a[i++];
        }
        while (i < mid) {
          b[k++] = a[i++];
        }
        while (j < hi) {
          b[k++] = a[j++];
        }
      }
      final int[] t = a;
      a = b;
      b = t;
    }
    return a;
  }
}
