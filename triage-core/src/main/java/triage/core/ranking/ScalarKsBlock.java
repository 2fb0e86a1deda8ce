package triage.core.ranking;

/** {@link KsBlock} in plain Java: eight running sums spelled out so they stay in registers. */
final class ScalarKsBlock implements KsBlock {
  @Override
  public void run(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a, double[] c,
      double[] d) {
    double all = 0;
    double s0 = 0;
    double s1 = 0;
    double s2 = 0;
    double s3 = 0;
    double s4 = 0;
    double s5 = 0;
    double s6 = 0;
    double s7 = 0;
    double d0 = 0;
    double d1 = 0;
    double d2 = 0;
    double d3 = 0;
    double d4 = 0;
    double d5 = 0;
    double d6 = 0;
    double d7 = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]];
      final double sw = sortedWeight[p];
      all += sw;
      s0 += (bits & 1) != 0 ? sw : 0;
      s1 += (bits & 2) != 0 ? sw : 0;
      s2 += (bits & 4) != 0 ? sw : 0;
      s3 += (bits & 8) != 0 ? sw : 0;
      s4 += (bits & 16) != 0 ? sw : 0;
      s5 += (bits & 32) != 0 ? sw : 0;
      s6 += (bits & 64) != 0 ? sw : 0;
      s7 += (bits & 128) != 0 ? sw : 0;
      if (runEnd[p]) {
        d0 = Math.max(d0, Math.abs(s0 * a[0] - all * c[0]));
        d1 = Math.max(d1, Math.abs(s1 * a[1] - all * c[1]));
        d2 = Math.max(d2, Math.abs(s2 * a[2] - all * c[2]));
        d3 = Math.max(d3, Math.abs(s3 * a[3] - all * c[3]));
        d4 = Math.max(d4, Math.abs(s4 * a[4] - all * c[4]));
        d5 = Math.max(d5, Math.abs(s5 * a[5] - all * c[5]));
        d6 = Math.max(d6, Math.abs(s6 * a[6] - all * c[6]));
        d7 = Math.max(d7, Math.abs(s7 * a[7] - all * c[7]));
      }
    }
    d[0] = d0;
    d[1] = d1;
    d[2] = d2;
    d[3] = d3;
    d[4] = d4;
    d[5] = d5;
    d[6] = d6;
    d[7] = d7;
  }

  @Override
  public void runDraws(int[] order, double[] sortedU, double[] sortedV, boolean[] runEnd, byte[] packed, double[] a,
      double[] c, double[] d) {
    double all = 0;
    double s0 = 0;
    double s1 = 0;
    double s2 = 0;
    double s3 = 0;
    double s4 = 0;
    double s5 = 0;
    double s6 = 0;
    double s7 = 0;
    double d0 = 0;
    double d1 = 0;
    double d2 = 0;
    double d3 = 0;
    double d4 = 0;
    double d5 = 0;
    double d6 = 0;
    double d7 = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]];
      final double u = sortedU[p];
      final double v = sortedV[p];
      all += v;
      if (bits != 0) {
        s0 += (bits & 1) != 0 ? u * a[0] + v * c[0] : 0;
        s1 += (bits & 2) != 0 ? u * a[1] + v * c[1] : 0;
        s2 += (bits & 4) != 0 ? u * a[2] + v * c[2] : 0;
        s3 += (bits & 8) != 0 ? u * a[3] + v * c[3] : 0;
        s4 += (bits & 16) != 0 ? u * a[4] + v * c[4] : 0;
        s5 += (bits & 32) != 0 ? u * a[5] + v * c[5] : 0;
        s6 += (bits & 64) != 0 ? u * a[6] + v * c[6] : 0;
        s7 += (bits & 128) != 0 ? u * a[7] + v * c[7] : 0;
      }
      if (runEnd[p]) {
        d0 = Math.max(d0, Math.abs(s0 - all * c[0]));
        d1 = Math.max(d1, Math.abs(s1 - all * c[1]));
        d2 = Math.max(d2, Math.abs(s2 - all * c[2]));
        d3 = Math.max(d3, Math.abs(s3 - all * c[3]));
        d4 = Math.max(d4, Math.abs(s4 - all * c[4]));
        d5 = Math.max(d5, Math.abs(s5 - all * c[5]));
        d6 = Math.max(d6, Math.abs(s6 - all * c[6]));
        d7 = Math.max(d7, Math.abs(s7 - all * c[7]));
      }
    }
    d[0] = d0;
    d[1] = d1;
    d[2] = d2;
    d[3] = d3;
    d[4] = d4;
    d[5] = d5;
    d[6] = d6;
    d[7] = d7;
  }
}
