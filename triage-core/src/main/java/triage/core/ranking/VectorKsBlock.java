package triage.core.ranking;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.VectorMask;
import jdk.incubator.vector.VectorSpecies;

/**
 * {@link KsBlock} on the Vector API: one 512-bit lane per labeling; a labeling's sum takes the weight where its
 * bit is set (a masked add), the same additions as {@link ScalarKsBlock} in the same order. Loaded only by
 * reflection when the module is present; refuses to construct without eight double lanes.
 */
final class VectorKsBlock implements KsBlock {
  private static final VectorSpecies<Double> S = DoubleVector.SPECIES_512;

  /** Checks the machine has eight double lanes at full speed. */
  VectorKsBlock() {
    if (DoubleVector.SPECIES_PREFERRED.length() < LANES) {
      throw new UnsupportedOperationException("fewer than eight double lanes");
    }
  }

  @Override
  public void run(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a, double[] c,
      double[] d) {
    final DoubleVector va = DoubleVector.fromArray(S, a, 0);
    final DoubleVector vc = DoubleVector.fromArray(S, c, 0);
    DoubleVector s = DoubleVector.zero(S);
    DoubleVector vd = DoubleVector.zero(S);
    double all = 0;
    for (int p = 0; p < order.length; p++) {
      final int bits = packed[order[p]] & 0xff;
      final double sw = sortedWeight[p];
      all += sw;
      s = s.add(sw, VectorMask.fromLong(S, bits));
      if (runEnd[p]) {
        vd = vd.max(s.mul(va).sub(vc.mul(all)).abs());
      }
    }
    vd.intoArray(d, 0);
  }
}
