package triage.core.ratio;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.FloatVector;
import jdk.incubator.vector.IntVector;
import jdk.incubator.vector.VectorOperators;
import jdk.incubator.vector.VectorSpecies;

/**
 * Tight vector loops that measure this machine's per-element cost of the kernel's operations,
 * for {@link FitBenchmark}'s arithmetic-limit estimate. Loaded only when the vector module is
 * present. Each probe works on one L1-resident tile of {@link Kernel#TILE} values so it measures
 * arithmetic, not memory.
 */
final class VectorProbe {
  /** Double species of the kernel. */
  private static final VectorSpecies<Double> S = VectorKernel.S;
  /** Float species of the same width. */
  private static final VectorSpecies<Float> F = FloatVector.SPECIES_PREFERRED;

  private VectorProbe() {
  }

  /**
   * Nanoseconds per element of [double exp, double divide, double fma, float exp]: the minimum
   * over eight rounds of {@code reps} passes over one tile (the minimum discards JIT warm-up and
   * time stolen by other processes on a shared machine).
   */
  static double[] measure(int reps) {
    double[] a = new double[Kernel.TILE];
    double[] b = new double[Kernel.TILE];
    float[] fa = new float[Kernel.TILE];
    float[] fb = new float[Kernel.TILE];
    for (int i = 0; i < a.length; i++) {
      a[i] = (i % 17) * 0.1 - 0.8;
      fa[i] = (float) a[i];
    }
    double[] out = {Double.MAX_VALUE, Double.MAX_VALUE, Double.MAX_VALUE, Double.MAX_VALUE};
    for (int round = 0; round < 8; round++) { // minimum over rounds: JIT warm-up and noise
      long t0 = System.nanoTime();
      for (int r = 0; r < reps; r++) {
        VectorKernel.transform(VectorKernel.EXP, a, 0, b, 0, a.length);
      }
      long t1 = System.nanoTime();
      for (int r = 0; r < reps; r++) {
        for (int e = 0; e < a.length; e += S.length()) {
          DoubleVector x = DoubleVector.fromArray(S, a, e);
          DoubleVector.broadcast(S, 1.0).div(x.add(3.0)).intoArray(b, e);
        }
      }
      long t2 = System.nanoTime();
      DoubleVector acc0 = DoubleVector.zero(S);
      DoubleVector acc1 = DoubleVector.zero(S);
      DoubleVector acc2 = DoubleVector.zero(S);
      DoubleVector acc3 = DoubleVector.zero(S);
      for (int r = 0; r < reps; r++) {
        for (int e = 0; e < a.length; e += 4 * S.length()) {
          acc0 = DoubleVector.fromArray(S, a, e).fma(DoubleVector.fromArray(S, b, e), acc0);
          acc1 = DoubleVector.fromArray(S, a, e + S.length())
              .fma(DoubleVector.fromArray(S, b, e + S.length()), acc1);
          acc2 = DoubleVector.fromArray(S, a, e + 2 * S.length())
              .fma(DoubleVector.fromArray(S, b, e + 2 * S.length()), acc2);
          acc3 = DoubleVector.fromArray(S, a, e + 3 * S.length())
              .fma(DoubleVector.fromArray(S, b, e + 3 * S.length()), acc3);
        }
      }
      acc0.add(acc1).add(acc2).add(acc3).intoArray(b, 0);
      long t3 = System.nanoTime();
      for (int r = 0; r < reps; r++) {
        floatExp(fa, fb);
      }
      long t4 = System.nanoTime();
      double per = (double) reps * a.length;
      out[0] = Math.min(out[0], (t1 - t0) / per);
      out[1] = Math.min(out[1], (t2 - t1) / per);
      out[2] = Math.min(out[2], (t3 - t2) / per);
      out[3] = Math.min(out[3], (t4 - t3) / per);
    }
    if (b[0] == 42.0 && fb[0] == 42f) {
      out[0] += 1e-9; // keep results alive
    }
    return out;
  }

  /** Float exponential of an array (degree-6 Taylor after the same reduction; ~1e−7 relative). */
  private static void floatExp(float[] src, float[] dst) {
    for (int e = 0; e < src.length; e += F.length()) {
      FloatVector x = FloatVector.fromArray(F, src, e);
      FloatVector xc = x.min(87f).max(-87f);
    FloatVector t = xc.fma(FloatVector.broadcast(F, 1.442695f), FloatVector.broadcast(F, 0x1.8p23f));
    FloatVector n = t.sub(0x1.8p23f);
    FloatVector r = n.fma(FloatVector.broadcast(F, -0.6931472f), xc);
    FloatVector p = FloatVector.broadcast(F, 1f / 720f).fma(r, FloatVector.broadcast(F, 1f / 120f));
    p = p.fma(r, FloatVector.broadcast(F, 1f / 24f));
    p = p.fma(r, FloatVector.broadcast(F, 1f / 6f));
    p = p.fma(r, FloatVector.broadcast(F, 0.5f));
    p = p.fma(r, FloatVector.broadcast(F, 1f));
    p = p.fma(r, FloatVector.broadcast(F, 1f));
    IntVector bits = ((IntVector) t.reinterpretAsInts()).add(127).lanewise(VectorOperators.LSHL, 23);
      p.mul((FloatVector) bits.reinterpretAsFloats()).intoArray(dst, e);
    }
  }
}
