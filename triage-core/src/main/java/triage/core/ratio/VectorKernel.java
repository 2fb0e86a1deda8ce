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
      DoubleVector xc = x;
      if (x.abs().compare(VectorOperators.GT, FastExp.MAX_ARG).anyTrue()) {
        xc = x.min(FastExp.MAX_ARG).max(FastExp.MIN_ARG);
      }
      DoubleVector t = xc.fma(FastExp.LOG2E, FastExp.SHIFTER);
      DoubleVector n = t.sub(FastExp.SHIFTER);
      DoubleVector r = n.fma(negLn2Hi, xc);
      r = n.fma(negLn2Lo, r);
      DoubleVector r2 = r.mul(r);
      DoubleVector r4 = r2.mul(r2);
      DoubleVector r8 = r4.mul(r4);
      DoubleVector q01 = r.fma(one, one);
      DoubleVector q23 = r.fma(DoubleVector.broadcast(S, FastExp.C3), DoubleVector.broadcast(S, 0.5));
      DoubleVector q45 = r.fma(DoubleVector.broadcast(S, FastExp.C5), DoubleVector.broadcast(S, FastExp.C4));
      DoubleVector q67 = r.fma(DoubleVector.broadcast(S, FastExp.C7), DoubleVector.broadcast(S, FastExp.C6));
      DoubleVector q89 = r.fma(DoubleVector.broadcast(S, FastExp.C9), DoubleVector.broadcast(S, FastExp.C8));
      DoubleVector q1011 = r.fma(DoubleVector.broadcast(S, FastExp.C11), DoubleVector.broadcast(S, FastExp.C10));
      DoubleVector q1213 = r.fma(DoubleVector.broadcast(S, FastExp.C13), DoubleVector.broadcast(S, FastExp.C12));
      DoubleVector q03 = q23.fma(r2, q01);
      DoubleVector q47 = q67.fma(r2, q45);
      DoubleVector q811 = q1011.fma(r2, q89);
      DoubleVector q07 = q47.fma(r4, q03);
      DoubleVector q813 = q1213.fma(r4, q811);
      DoubleVector p = q813.fma(r8, q07);
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
      gradientRow(r, 0, h, ts, n, m, lanes, 2, 2 + m);
      for (int j = 0; j < m; j++) {
        int hb = j * n + ts;
        for (int e = 0; e < TILE; e += V) {
          DoubleVector.fromArray(S, f, e).mul(DoubleVector.fromArray(S, h, hb + e)).intoArray(t, e);
        }
        gradientRow(t, 0, h, ts, n, j + 1, lanes, hess + j * (j + 1) / 2, hess + m * (m + 1) / 2 + j);
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
      int j = 0;
      for (; j + 4 <= nout; j += 4) {
        preActivations4(th, wl + j * nin, b.bOff[l] + j, nin, in, inBase, inStride, out, j * TILE);
      }
      for (; j < nout; j++) {
        preActivations1(th, wl + j * nin, b.bOff[l] + j, nin, in, inBase, inStride, out, j * TILE);
      }
      transform(sigmoid ? SIGMOID : TANH, out, 0, out, 0, nout * TILE);
    }
  }

  /** The pre-activations of one unit (see {@link #preActivations4}), four event vectors at a time as four chains. */
  private static void preActivations1(double[] th, int w, int bias, int nin, double[] in, int inBase, int inStride,
      double[] out, int ob) {
    DoubleVector b0 = DoubleVector.broadcast(S, th[bias]);
    for (int e = 0; e < TILE; e += 4 * V) {
      DoubleVector z0 = b0;
      DoubleVector z1 = b0;
      DoubleVector z2 = b0;
      DoubleVector z3 = b0;
      for (int k = 0; k < nin; k++) {
        DoubleVector wk = DoubleVector.broadcast(S, th[w + k]);
        int o = inBase + k * inStride + e;
        z0 = wk.fma(DoubleVector.fromArray(S, in, o), z0);
        z1 = wk.fma(DoubleVector.fromArray(S, in, o + V), z1);
        z2 = wk.fma(DoubleVector.fromArray(S, in, o + 2 * V), z2);
        z3 = wk.fma(DoubleVector.fromArray(S, in, o + 3 * V), z3);
      }
      z0.intoArray(out, ob + e);
      z1.intoArray(out, ob + e + V);
      z2.intoArray(out, ob + e + 2 * V);
      z3.intoArray(out, ob + e + 3 * V);
    }
  }

  /**
   * The pre-activations of four consecutive units (weights from {@code w}, rows of {@code nin}; biases from
   * {@code bias}) into four rows of TILE at {@code out[ob..]}: per unit bias, then fma over the inputs in order, as
   * the one-unit loop, but four independent chains per event vector, each input vector loaded once.
   */
  private static void preActivations4(double[] th, int w, int bias, int nin, double[] in, int inBase, int inStride,
      double[] out, int ob) {
    DoubleVector b0 = DoubleVector.broadcast(S, th[bias]);
    DoubleVector b1 = DoubleVector.broadcast(S, th[bias + 1]);
    DoubleVector b2 = DoubleVector.broadcast(S, th[bias + 2]);
    DoubleVector b3 = DoubleVector.broadcast(S, th[bias + 3]);
    for (int e = 0; e < TILE; e += V) {
      DoubleVector z0 = b0;
      DoubleVector z1 = b1;
      DoubleVector z2 = b2;
      DoubleVector z3 = b3;
      for (int k = 0; k < nin; k++) {
        DoubleVector x = DoubleVector.fromArray(S, in, inBase + k * inStride + e);
        z0 = DoubleVector.broadcast(S, th[w + k]).fma(x, z0);
        z1 = DoubleVector.broadcast(S, th[w + nin + k]).fma(x, z1);
        z2 = DoubleVector.broadcast(S, th[w + 2 * nin + k]).fma(x, z2);
        z3 = DoubleVector.broadcast(S, th[w + 3 * nin + k]).fma(x, z3);
      }
      z0.intoArray(out, ob + e);
      z1.intoArray(out, ob + TILE + e);
      z2.intoArray(out, ob + 2 * TILE + e);
      z3.intoArray(out, ob + 3 * TILE + e);
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
    gradientRow(dOut, 0, last, lastBase, lastStride, nlast, lanes, 1 + wo, 1 + b.bOff[lo]);
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
        gradientRow(del, j * TILE, in, inBase, inStride, nin, lanes, 1 + wl + j * nin, 1 + b.bOff[l] + j);
      }
      if (l > 1) {
        double[] prevDelta = ws.delta[l - 2];
        double[] prevAct = ws.act[l - 2];
        int k = 0;
        for (; k + 4 <= nin; k += 4) {
          backDelta4(th, wl + k, nin, nout, del, prevAct, prevDelta, k * TILE, sigmoid);
        }
        for (; k < nin; k++) {
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

  /** TILE ones: a sum is the dot product with it, fma(u, 1, a) being exactly a + u. */
  private static final double[] ONES = java.util.stream.DoubleStream.generate(() -> 1.0).limit(TILE).toArray();

  /**
   * The dot products of u with the {@code count} rows v[vo + c·stride] into slots {@code wSlot + c}, and the sum of u
   * into slot {@code bSlot}: bit for bit {@link #dot} and {@link #sum} each, but with up to four independent
   * accumulator chains per pass over the tile. One chain is bound by the latency of the fused multiply-add (four cycles
   * for each of its TILE/8 steps); four let the core issue one or two a cycle.
   */
  private static void gradientRow(double[] u, int uo, double[] v, int vo, int stride, int count, double[] lanes,
      int wSlot, int bSlot) {
    if (R != 1) {
      for (int c = 0; c < count; c++) {
        dot(u, uo, v, vo + c * stride, lanes, (wSlot + c) * LANES);
      }
      sum(u, uo, lanes, bSlot * LANES);
      return;
    }
    int c = 0;
    for (; c + 4 <= count; c += 4) {
      int o = vo + c * stride;
      dot4(u, uo, v, o, v, o + stride, v, o + 2 * stride, v, o + 3 * stride, lanes, (wSlot + c) * LANES,
          (wSlot + c + 1) * LANES, (wSlot + c + 2) * LANES, (wSlot + c + 3) * LANES);
    }
    int o = vo + c * stride;
    switch (count - c) {
      case 0 -> sum(u, uo, lanes, bSlot * LANES);
      case 1 -> dot2(u, uo, v, o, ONES, 0, lanes, (wSlot + c) * LANES, bSlot * LANES);
      case 2 -> {
        dot2(u, uo, v, o, v, o + stride, lanes, (wSlot + c) * LANES, (wSlot + c + 1) * LANES);
        sum(u, uo, lanes, bSlot * LANES);
      }
      default -> dot4(u, uo, v, o, v, o + stride, v, o + 2 * stride, ONES, 0, lanes, (wSlot + c) * LANES,
          (wSlot + c + 1) * LANES, (wSlot + c + 2) * LANES, bSlot * LANES);
    }
  }

  /** Four {@link #dot}s of u (R = 1 only), each its own chain, in one pass. */
  private static void dot4(double[] u, int uo, double[] v0, int o0, double[] v1, int o1, double[] v2, int o2,
      double[] v3, int o3, double[] lanes, int l0, int l1, int l2, int l3) {
    DoubleVector a0 = DoubleVector.fromArray(S, lanes, l0);
    DoubleVector a1 = DoubleVector.fromArray(S, lanes, l1);
    DoubleVector a2 = DoubleVector.fromArray(S, lanes, l2);
    DoubleVector a3 = DoubleVector.fromArray(S, lanes, l3);
    for (int e = 0; e < TILE; e += 8) {
      DoubleVector x = DoubleVector.fromArray(S, u, uo + e);
      a0 = x.fma(DoubleVector.fromArray(S, v0, o0 + e), a0);
      a1 = x.fma(DoubleVector.fromArray(S, v1, o1 + e), a1);
      a2 = x.fma(DoubleVector.fromArray(S, v2, o2 + e), a2);
      a3 = x.fma(DoubleVector.fromArray(S, v3, o3 + e), a3);
    }
    a0.intoArray(lanes, l0);
    a1.intoArray(lanes, l1);
    a2.intoArray(lanes, l2);
    a3.intoArray(lanes, l3);
  }

  /** Two {@link #dot}s of u (R = 1 only), each its own chain, in one pass. */
  private static void dot2(double[] u, int uo, double[] v0, int o0, double[] v1, int o1, double[] lanes, int l0,
      int l1) {
    DoubleVector a0 = DoubleVector.fromArray(S, lanes, l0);
    DoubleVector a1 = DoubleVector.fromArray(S, lanes, l1);
    for (int e = 0; e < TILE; e += 8) {
      DoubleVector x = DoubleVector.fromArray(S, u, uo + e);
      a0 = x.fma(DoubleVector.fromArray(S, v0, o0 + e), a0);
      a1 = x.fma(DoubleVector.fromArray(S, v1, o1 + e), a1);
    }
    a0.intoArray(lanes, l0);
    a1.intoArray(lanes, l1);
  }

  /**
   * δ of four consecutive units of the layer below (rows at {@code o..}): per unit, δ_0·w, then fma over the units
   * above in order, times the activation's derivative, as the one-unit loop, but four chains per event vector, each
   * row of δ above loaded once. {@code w} is the weight of unit 0 above to the first of the four.
   */
  private static void backDelta4(double[] th, int w, int nin, int nout, double[] del, double[] act,
      double[] out, int o, boolean sigmoid) {
    final DoubleVector one = DoubleVector.broadcast(S, 1.0);
    for (int e = 0; e < TILE; e += V) {
      DoubleVector d = DoubleVector.fromArray(S, del, e);
      DoubleVector s0 = d.mul(th[w]);
      DoubleVector s1 = d.mul(th[w + 1]);
      DoubleVector s2 = d.mul(th[w + 2]);
      DoubleVector s3 = d.mul(th[w + 3]);
      for (int j = 1; j < nout; j++) {
        DoubleVector dj = DoubleVector.fromArray(S, del, j * TILE + e);
        int wj = w + j * nin;
        s0 = DoubleVector.broadcast(S, th[wj]).fma(dj, s0);
        s1 = DoubleVector.broadcast(S, th[wj + 1]).fma(dj, s1);
        s2 = DoubleVector.broadcast(S, th[wj + 2]).fma(dj, s2);
        s3 = DoubleVector.broadcast(S, th[wj + 3]).fma(dj, s3);
      }
      DoubleVector a0 = DoubleVector.fromArray(S, act, o + e);
      DoubleVector a1 = DoubleVector.fromArray(S, act, o + TILE + e);
      DoubleVector a2 = DoubleVector.fromArray(S, act, o + 2 * TILE + e);
      DoubleVector a3 = DoubleVector.fromArray(S, act, o + 3 * TILE + e);
      if (sigmoid) {
        s0.mul(a0.mul(one.sub(a0))).intoArray(out, o + e);
        s1.mul(a1.mul(one.sub(a1))).intoArray(out, o + TILE + e);
        s2.mul(a2.mul(one.sub(a2))).intoArray(out, o + 2 * TILE + e);
        s3.mul(a3.mul(one.sub(a3))).intoArray(out, o + 3 * TILE + e);
      } else {
        s0.mul(one.sub(a0.mul(a0))).intoArray(out, o + e);
        s1.mul(one.sub(a1.mul(a1))).intoArray(out, o + TILE + e);
        s2.mul(one.sub(a2.mul(a2))).intoArray(out, o + 2 * TILE + e);
        s3.mul(one.sub(a3.mul(a3))).intoArray(out, o + 3 * TILE + e);
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
