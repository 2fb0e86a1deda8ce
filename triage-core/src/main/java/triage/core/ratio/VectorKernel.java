package triage.core.ratio;

import jdk.incubator.vector.DoubleVector;
import jdk.incubator.vector.LongVector;
import jdk.incubator.vector.VectorMask;
import jdk.incubator.vector.VectorOperators;
import jdk.incubator.vector.VectorSpecies;

/**
 * Vector API version of {@link ScalarKernel}: the same operations per event, V events at a time
 * (V = the preferred double species length, at most 8: 4 with AVX2, 8 with AVX-512). The eight
 * logical accumulator lanes are held in 8/V vector registers, so the result is bit-identical to
 * the scalar kernel.
 *
 * <p>Only loaded (by reflection, from {@link Kernels}) when the module
 * {@code jdk.incubator.vector} is present; it never uses
 * {@code reduceLanes}, whose floating-point order is unspecified.
 */
final class VectorKernel implements Kernel {
  /** Species used. */
  static final VectorSpecies<Double> S = pickSpecies();
  /** Lanes per vector. */
  static final int V = S.length();
  /** Vectors per group of eight logical lanes. */
  static final int R = LANES / V;

  /** Public for reflective construction. */
  public VectorKernel() {
    if (V < 2 || LANES % V != 0) {
      throw new IllegalStateException("no useful double vector species (length " + V + ")");
    }
  }

  private static VectorSpecies<Double> pickSpecies() {
    VectorSpecies<Double> p = DoubleVector.SPECIES_PREFERRED;
    return p.length() <= LANES ? p : DoubleVector.SPECIES_512;
  }

  @Override
  public String name() {
    return "vector(" + V + " x double)";
  }

  /** {@link #transform} mode: dst = 1 / (1 + e^{−x}). */
  static final int SIGMOID = 0;
  /** {@link #transform} mode: dst = 1 − 2 / (1 + e^{2x}). */
  static final int TANH = 1;
  /** {@link #transform} mode: dst = e^x. */
  static final int EXP = 2;
  /** {@link #transform} mode: dst = e^{−|x|}. */
  static final int EXP_NEG_ABS = 3;

  /**
   * Applies an exponential-based map to {@code len} values (a multiple of V), lane-wise with
   * exactly the operations of {@link FastExp#exp} and {@link Activation#apply}.
   *
   * <p>The exponential is written out inside this loop on purpose: a helper method taking and
   * returning vectors is compiled on its own once hot, is then too large for the JIT to inline,
   * and every vector crossing the call is boxed (measured: ≈ 25 ns instead of ≈ 1 ns per value).
   */
  static void transform(int mode, double[] src, int so, double[] dst, int dOff, int len) {
    final DoubleVector one = DoubleVector.broadcast(S, 1.0);
    final DoubleVector two = DoubleVector.broadcast(S, 2.0);
    final DoubleVector negLn2Hi = DoubleVector.broadcast(S, -FastExp.LN2_HI);
    final DoubleVector negLn2Lo = DoubleVector.broadcast(S, -FastExp.LN2_LO);
    for (int e = 0; e < len; e += V) {
      DoubleVector x = DoubleVector.fromArray(S, src, so + e);
      if (mode == SIGMOID) {
        x = x.neg();
      } else if (mode == TANH) {
        x = x.add(x);
      } else if (mode == EXP_NEG_ABS) {
        x = x.abs().neg();
      }
      DoubleVector xc = x.min(FastExp.MAX_ARG).max(FastExp.MIN_ARG);
      DoubleVector t = xc.fma(FastExp.LOG2E, FastExp.SHIFTER);
      DoubleVector n = t.sub(FastExp.SHIFTER);
      DoubleVector r = n.fma(negLn2Hi, xc);
      r = n.fma(negLn2Lo, r);
      DoubleVector p = DoubleVector.broadcast(S, FastExp.C13).fma(r, DoubleVector.broadcast(S, FastExp.C12));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C11));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C10));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C9));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C8));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C7));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C6));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C5));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C4));
      p = p.fma(r, DoubleVector.broadcast(S, FastExp.C3));
      p = p.fma(r, DoubleVector.broadcast(S, 0.5));
      p = p.fma(r, one);
      p = p.fma(r, one);
      LongVector bits = ((LongVector) t.reinterpretAsLongs()).add(1023L)
          .lanewise(VectorOperators.LSHL, 52L);
      DoubleVector ex = p.mul((DoubleVector) bits.reinterpretAsDoubles());
      DoubleVector y;
      if (mode == SIGMOID) {
        y = one.div(ex.add(1.0));
      } else if (mode == TANH) {
        y = one.sub(two.div(ex.add(1.0)));
      } else {
        y = ex;
      }
      y.intoArray(dst, dOff + e);
    }
  }

  @Override
  public void accumulate(Batch b, double[] th, int start, int end, Batch.Workspace ws) {
    for (int ts = start; ts < end; ts += TILE) {
      tile(b, th, ts, ws, null);
    }
  }

  @Override
  public void forwardTile(Batch b, double[] th, int ts, Batch.Workspace ws) {
    forward(b, th, ts, ws);
  }

  @Override
  public void accumulateFrom(Batch b, double[] th, double[][] acts, int start, int end, Batch.Workspace ws) {
    for (int ts = start; ts < end; ts += TILE) {
      tile(b, th, ts, ws, acts);
    }
  }

  @Override
  public void outputSums(Batch b, double[] h, double[] a, int start, int end, boolean derivatives,
      Batch.Workspace ws) {
    final int m = a.length - 1;
    final int n = b.n;
    final double[] f = ws.f;
    final double[] u = ws.tmp;
    final double[] t = ws.tmp2;
    final double[] r = ws.dOut;
    final double[] lanes = ws.outputLanes;
    final double[] ca = b.coefA;
    final double[] cb = b.coefB;
    final double offset = b.offset;
    final int hess = 2 + m + 1;
    for (int ts = start; ts < end; ts += TILE) {
      for (int e = 0; e < TILE; e += V) {
        DoubleVector fv = DoubleVector.broadcast(S, a[m]);
        for (int j = 0; j < m; j++) {
          fv = DoubleVector.broadcast(S, a[j]).fma(DoubleVector.fromArray(S, h, j * n + ts + e), fv);
        }
        fv.add(offset).intoArray(f, e);
      }
      transform(EXP, f, 0, u, 0, TILE);
      for (int e = 0; e < TILE; e += V) {
        DoubleVector av = DoubleVector.fromArray(S, ca, ts + e);
        DoubleVector bv = DoubleVector.fromArray(S, cb, ts + e);
        DoubleVector ue = DoubleVector.fromArray(S, u, e);
        DoubleVector w = av.mul(ue);
        av.mul(ue.sub(1.0)).sub(bv.mul(DoubleVector.fromArray(S, f, e))).intoArray(t, e);
        w.sub(bv).intoArray(r, e);
        w.add(bv).intoArray(u, e);
        w.intoArray(f, e);
      }
      sum(t, 0, lanes, 0);
      sum(u, 0, lanes, LANES);
      if (!derivatives) {
        continue;
      }
      for (int j = 0; j < m; j++) {
        dot(r, 0, h, j * n + ts, lanes, (2 + j) * LANES);
      }
      sum(r, 0, lanes, (2 + m) * LANES);
      for (int j = 0; j < m; j++) {
        int hb = j * n + ts;
        for (int e = 0; e < TILE; e += V) {
          DoubleVector.fromArray(S, f, e).mul(DoubleVector.fromArray(S, h, hb + e)).intoArray(t, e);
        }
        for (int k = 0; k <= j; k++) {
          dot(t, 0, h, k * n + ts, lanes, (hess + j * (j + 1) / 2 + k) * LANES);
        }
        sum(t, 0, lanes, (hess + m * (m + 1) / 2 + j) * LANES);
      }
      sum(f, 0, lanes, (hess + m * (m + 1) / 2 + m) * LANES);
    }
  }

  /** Forward pass through the hidden layers of one tile, into {@code ws.act}. */
  private static void forward(Batch b, double[] th, int ts, Batch.Workspace ws) {
    final int hidden = b.width.length - 2;
    final int n = b.n;
    final boolean sigmoid = b.arch.activation() == Activation.SIGMOID;
    for (int l = 1; l <= hidden; l++) {
      int nin = b.width[l - 1];
      int nout = b.width[l];
      double[] out = ws.act[l - 1];
      double[] in = l == 1 ? b.x : ws.act[l - 2];
      int inBase = l == 1 ? ts : 0;
      int inStride = l == 1 ? n : TILE;
      int wl = b.wOff[l];
      for (int j = 0; j < nout; j++) {
        int ob = j * TILE;
        int wj = wl + j * nin;
        double bias = th[b.bOff[l] + j];
        for (int e = 0; e < TILE; e += V) {
          DoubleVector z = DoubleVector.broadcast(S, bias);
          for (int k = 0; k < nin; k++) {
            z = DoubleVector.broadcast(S, th[wj + k])
                .fma(DoubleVector.fromArray(S, in, inBase + k * inStride + e), z);
          }
          z.intoArray(out, ob + e);
        }
        transform(sigmoid ? SIGMOID : TANH, out, ob, out, ob, TILE);
      }
    }
  }

  private static void tile(Batch b, double[] th, int ts, Batch.Workspace ws, double[][] acts) {
    final int hidden = b.width.length - 2;
    final int n = b.n;
    final boolean sigmoid = b.arch.activation() == Activation.SIGMOID;
    final DoubleVector one = DoubleVector.broadcast(S, 1.0);
    if (acts == null) {
      forward(b, th, ts, ws);
    } else {
      Kernel.loadTile(b, acts, ts, ws);
    }
    final int lo = hidden + 1;
    final int nlast = b.width[hidden];
    final double[] last = hidden == 0 ? b.x : ws.act[hidden - 1];
    final int lastBase = hidden == 0 ? ts : 0;
    final int lastStride = hidden == 0 ? n : TILE;
    final double[] f = ws.f;
    final double[] dOut = ws.dOut;
    final double[] lanes = ws.lanes;
    final double[] ca = b.coefA;
    final double[] cb = b.coefB;
    final double outBias = th[b.bOff[lo]];
    final int wo = b.wOff[lo];
    final boolean extended = b.loss == LossKind.EXTENDED_LIKELIHOOD;
    for (int e = 0; e < TILE; e += V) {
      DoubleVector fv = DoubleVector.broadcast(S, outBias);
      for (int j = 0; j < nlast; j++) {
        fv = DoubleVector.broadcast(S, th[wo + j])
            .fma(DoubleVector.fromArray(S, last, lastBase + j * lastStride + e), fv);
      }
      fv.add(b.offset).intoArray(f, e);
    }
    final double[] u = ws.tmp;
    transform(extended ? EXP : EXP_NEG_ABS, f, 0, u, 0, TILE);
    DoubleVector loss0 = DoubleVector.fromArray(S, lanes, 0);
    DoubleVector loss1 = R > 1 ? DoubleVector.fromArray(S, lanes, V) : null;
    for (int e = 0; e < TILE; e += V) {
      DoubleVector fv = DoubleVector.fromArray(S, f, e);
      DoubleVector ev = DoubleVector.fromArray(S, u, e);
      DoubleVector av = DoubleVector.fromArray(S, ca, ts + e);
      DoubleVector bv = DoubleVector.fromArray(S, cb, ts + e);
      if (extended) {
        DoubleVector term = av.mul(ev.sub(1.0)).sub(bv.mul(fv));
        if (R == 2) {
          if ((e & 7) == 0) {
            loss0 = loss0.add(term);
          } else {
            loss1 = loss1.add(term);
          }
        } else if (R == 1) {
          loss0 = loss0.add(term);
        } else {
          int lane = e & 7;
          DoubleVector.fromArray(S, lanes, lane).add(term).intoArray(lanes, lane);
        }
        av.mul(ev).sub(bv).intoArray(dOut, e);
      } else {
        VectorMask<Double> negative = fv.compare(VectorOperators.LT, 0.0);
        DoubleVector s = one.blend(ev, negative).div(ev.add(1.0));
        av.mul(s).sub(bv).intoArray(dOut, e);
      }
    }
    if (R <= 2) {
      loss0.intoArray(lanes, 0);
      if (R == 2) {
        loss1.intoArray(lanes, V);
      }
    }
    if (!extended) {
      Kernel.bceLossTerms(f, ws.tmp, ca, cb, ts, lanes);
    }
    for (int j = 0; j < nlast; j++) {
      dot(dOut, 0, last, lastBase + j * lastStride, lanes, (1 + wo + j) * LANES);
    }
    sum(dOut, 0, lanes, (1 + b.bOff[lo]) * LANES);
    if (hidden == 0) {
      return;
    }
    double[] dl = ws.delta[hidden - 1];
    double[] al = ws.act[hidden - 1];
    for (int j = 0; j < nlast; j++) {
      double w = th[wo + j];
      int o = j * TILE;
      for (int e = 0; e < TILE; e += V) {
        DoubleVector a = DoubleVector.fromArray(S, al, o + e);
        DoubleVector der = sigmoid ? a.mul(one.sub(a)) : one.sub(a.mul(a));
        DoubleVector.fromArray(S, dOut, e).mul(w).mul(der).intoArray(dl, o + e);
      }
    }
    for (int l = hidden; l >= 1; l--) {
      int nin = b.width[l - 1];
      int nout = b.width[l];
      double[] del = ws.delta[l - 1];
      double[] in = l == 1 ? b.x : ws.act[l - 2];
      int inBase = l == 1 ? ts : 0;
      int inStride = l == 1 ? n : TILE;
      int wl = b.wOff[l];
      for (int j = 0; j < nout; j++) {
        for (int k = 0; k < nin; k++) {
          dot(del, j * TILE, in, inBase + k * inStride, lanes,
              (1 + wl + j * nin + k) * LANES);
        }
        sum(del, j * TILE, lanes, (1 + b.bOff[l] + j) * LANES);
      }
      if (l > 1) {
        double[] prevDelta = ws.delta[l - 2];
        double[] prevAct = ws.act[l - 2];
        for (int k = 0; k < nin; k++) {
          int o = k * TILE;
          for (int e = 0; e < TILE; e += V) {
            DoubleVector s = DoubleVector.fromArray(S, del, e).mul(th[wl + k]);
            for (int j = 1; j < nout; j++) {
              s = DoubleVector.broadcast(S, th[wl + j * nin + k])
                  .fma(DoubleVector.fromArray(S, del, j * TILE + e), s);
            }
            DoubleVector a = DoubleVector.fromArray(S, prevAct, o + e);
            DoubleVector der = sigmoid ? a.mul(one.sub(a)) : one.sub(a.mul(a));
            s.mul(der).intoArray(prevDelta, o + e);
          }
        }
      }
    }
  }

  /** Eight-lane fused dot product accumulation (see {@link Kernel}). */
  private static void dot(double[] u, int uo, double[] v, int vo, double[] lanes, int lo) {
    if (R == 1) {
      DoubleVector a0 = DoubleVector.fromArray(S, lanes, lo);
      for (int e = 0; e < TILE; e += 8) {
        a0 = DoubleVector.fromArray(S, u, uo + e).fma(DoubleVector.fromArray(S, v, vo + e), a0);
      }
      a0.intoArray(lanes, lo);
    } else if (R == 2) {
      DoubleVector a0 = DoubleVector.fromArray(S, lanes, lo);
      DoubleVector a1 = DoubleVector.fromArray(S, lanes, lo + V);
      for (int e = 0; e < TILE; e += 8) {
        a0 = DoubleVector.fromArray(S, u, uo + e).fma(DoubleVector.fromArray(S, v, vo + e), a0);
        a1 = DoubleVector.fromArray(S, u, uo + e + V)
            .fma(DoubleVector.fromArray(S, v, vo + e + V), a1);
      }
      a0.intoArray(lanes, lo);
      a1.intoArray(lanes, lo + V);
    } else {
      for (int r = 0; r < R; r++) {
        DoubleVector a = DoubleVector.fromArray(S, lanes, lo + r * V);
        for (int e = r * V; e < TILE; e += 8) {
          a = DoubleVector.fromArray(S, u, uo + e).fma(DoubleVector.fromArray(S, v, vo + e), a);
        }
        a.intoArray(lanes, lo + r * V);
      }
    }
  }

  /** Eight-lane sum accumulation (see {@link Kernel}). */
  private static void sum(double[] u, int uo, double[] lanes, int lo) {
    for (int r = 0; r < R; r++) {
      DoubleVector a = DoubleVector.fromArray(S, lanes, lo + r * V);
      for (int e = r * V; e < TILE; e += 8) {
        a = a.add(DoubleVector.fromArray(S, u, uo + e));
      }
      a.intoArray(lanes, lo + r * V);
    }
  }
}
