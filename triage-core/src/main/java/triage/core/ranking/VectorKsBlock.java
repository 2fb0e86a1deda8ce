package triage.core.ranking;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.VectorMask;
import jdk.incubator.vector.VectorSpecies;

/**
 * {@link KsBlock} on the Vector API, one double lane per labeling, the same additions as {@link ScalarKsBlock} in the
 * same order. With 512-bit vectors the eight labelings are one vector and a labeling's sum takes the weight where
 * its bit is set (a masked add). With 256-bit vectors they are two vectors of four (labelings 0–3 and 4–7), and
 * each adds the weight times a 0/1 indicator read from a table by four bits of the labels: w·1 = w and s + w·0 = s
 * exactly for the finite, never negative-zero sums here, so the result is again bit for bit the scalar one. Loaded
 * only by reflection when the module is present; refuses to construct with fewer than four double lanes.
 */
final class VectorKsBlock implements KsBlock {
  /** Eight lanes. */
  private static final VectorSpecies<Double> S8 = DoubleVector.SPECIES_512;
  /** Four lanes. */
  private static final VectorSpecies<Double> S4 = DoubleVector.SPECIES_256;
  /** For four label bits b, the indicators of bits 0..3 at {@code 4 b}. */
  private static final double[] INDICATOR = indicators();
  /** Whether the machine has eight double lanes at full speed. */
  private final boolean wide;

  /** Checks the machine has at least four double lanes at full speed. */
  VectorKsBlock() {
    int lanes = DoubleVector.SPECIES_PREFERRED.length();
    if (lanes < 4) {
      throw new UnsupportedOperationException("fewer than four double lanes");
    }
    wide = lanes >= LANES;
  }

  private static double[] indicators() {
    double[] t = new double[16 * 4];
    for (int b = 0; b < 16; b++) {
      for (int j = 0; j < 4; j++) {
        t[4 * b + j] = (b >> j & 1) != 0 ? 1.0 : 0.0;
      }
    }
    return t;
  }

  @Override
  public void run(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a, double[] c,
      double[] d) {
    if (wide) {
      runWide(order, sortedWeight, runEnd, packed, a, c, d);
    } else {
      runPair(order, sortedWeight, runEnd, packed, a, c, d);
    }
  }

  private static void runWide(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a,
      double[] c, double[] d) {
    final DoubleVector va = DoubleVector.fromArray(S8, a, 0);
    final DoubleVector vc = DoubleVector.fromArray(S8, c, 0);
    DoubleVector s = DoubleVector.zero(S8);
    DoubleVector vd = DoubleVector.zero(S8);
    double all = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]] & 0xff;
      final double sw = sortedWeight[p];
      all += sw;
      s = s.add(sw, VectorMask.fromLong(S8, bits));
      if (runEnd[p]) {
        vd = vd.max(s.mul(va).sub(vc.mul(all)).abs());
      }
    }
    vd.intoArray(d, 0);
  }

  private static void runPair(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a,
      double[] c, double[] d) {
    final DoubleVector aLo = DoubleVector.fromArray(S4, a, 0);
    final DoubleVector aHi = DoubleVector.fromArray(S4, a, 4);
    final DoubleVector cLo = DoubleVector.fromArray(S4, c, 0);
    final DoubleVector cHi = DoubleVector.fromArray(S4, c, 4);
    DoubleVector sLo = DoubleVector.zero(S4);
    DoubleVector sHi = DoubleVector.zero(S4);
    DoubleVector dLo = DoubleVector.zero(S4);
    DoubleVector dHi = DoubleVector.zero(S4);
    double all = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]] & 0xff;
      final double sw = sortedWeight[p];
      all += sw;
      sLo = sLo.add(DoubleVector.fromArray(S4, INDICATOR, (bits & 15) << 2).mul(sw));
      sHi = sHi.add(DoubleVector.fromArray(S4, INDICATOR, (bits >>> 4) << 2).mul(sw));
      if (runEnd[p]) {
        dLo = dLo.max(sLo.mul(aLo).sub(cLo.mul(all)).abs());
        dHi = dHi.max(sHi.mul(aHi).sub(cHi.mul(all)).abs());
      }
    }
    dLo.intoArray(d, 0);
    dHi.intoArray(d, 4);
  }

  @Override
  public void runDraws(int[] order, double[] sortedU, double[] sortedV, boolean[] runEnd, byte[] packed, double[] a,
      double[] c, double[] d) {
    if (wide) {
      final DoubleVector va = DoubleVector.fromArray(S8, a, 0);
      final DoubleVector vc = DoubleVector.fromArray(S8, c, 0);
      DoubleVector s = DoubleVector.zero(S8);
      DoubleVector vd = DoubleVector.zero(S8);
      double all = 0;
      for (int p = 0; p < order.length; p++) {
        final int bits = packed[order[p]] & 0xff;
        final double u = sortedU[p];
        final double v = sortedV[p];
        all += v;
        s = s.add(va.mul(u).add(vc.mul(v)), VectorMask.fromLong(S8, bits));
        if (runEnd[p]) {
          vd = vd.max(s.sub(vc.mul(all)).abs());
        }
      }
      vd.intoArray(d, 0);
      return;
    }
    final DoubleVector aLo = DoubleVector.fromArray(S4, a, 0);
    final DoubleVector aHi = DoubleVector.fromArray(S4, a, 4);
    final DoubleVector cLo = DoubleVector.fromArray(S4, c, 0);
    final DoubleVector cHi = DoubleVector.fromArray(S4, c, 4);
    DoubleVector sLo = DoubleVector.zero(S4);
    DoubleVector sHi = DoubleVector.zero(S4);
    DoubleVector dLo = DoubleVector.zero(S4);
    DoubleVector dHi = DoubleVector.zero(S4);
    double all = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]] & 0xff;
      final double u = sortedU[p];
      final double v = sortedV[p];
      all += v;
      // Without a branch on "any bit set" (about half the positions have one: a branch the processor cannot
      // predict); adding 0 · t leaves a lane's sum as it is.
      sLo = sLo.add(DoubleVector.fromArray(S4, INDICATOR, (bits & 15) << 2).mul(aLo.mul(u).add(cLo.mul(v))));
      sHi = sHi.add(DoubleVector.fromArray(S4, INDICATOR, (bits >>> 4) << 2).mul(aHi.mul(u).add(cHi.mul(v))));
      if (runEnd[p]) {
        dLo = dLo.max(sLo.sub(cLo.mul(all)).abs());
        dHi = dHi.max(sHi.sub(cHi.mul(all)).abs());
      }
    }
    dLo.intoArray(d, 0);
    dHi.intoArray(d, 4);
  }
}
