package triage.core.ratio;

/**
 * Plain-Java loss-and-gradient kernel: forward pass, loss terms and back-propagation tile by
 * tile, with element-wise loops over the events of a tile (which the JIT may auto-vectorise) and
 * eight explicit accumulators per sum. The reference for {@link VectorKernel}.
 *
 * <p>Per event and per tile: hidden layer l, unit j: z = b_j, then z = fma(W_jk, a_k, z) for
 * k = 0..n_{l−1}−1, a_j = act(z); output f = fma chain in the same way, plus the offset; loss
 * term and ∂ℓ/∂f (see {@link Batch}); output-layer δ_j = (∂ℓ/∂f · W_j) · act'(a_j); hidden
 * back-propagation s_k = W_0k δ_0, s_k = fma(W_jk, δ_j, s_k), δ_k = s_k · act'(a_k); gradient
 * lanes lane = fma(δ_j, a_k, lane), bias lanes lane = lane + δ_j.
 */
final class ScalarKernel implements Kernel {
  /** Shared stateless instance. */
  static final ScalarKernel INSTANCE = new ScalarKernel();

  private ScalarKernel() {
  }

  @Override
  public String name() {
    return "scalar";
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
      double bias = a[m];
      for (int e = 0; e < TILE; e++) {
        f[e] = bias;
      }
      for (int j = 0; j < m; j++) {
        double w = a[j];
        int hb = j * n + ts;
        for (int e = 0; e < TILE; e++) {
          f[e] = Math.fma(w, h[hb + e], f[e]);
        }
      }
      for (int e = 0; e < TILE; e++) {
        f[e] = f[e] + offset;
        u[e] = FastExp.exp(f[e]);
      }
      for (int e = 0; e < TILE; e++) {
        double ai = ca[ts + e];
        double bi = cb[ts + e];
        double ue = u[e];
        double w = ai * ue;
        t[e] = ai * (ue - 1.0) - bi * f[e];
        r[e] = w - bi;
        u[e] = w + bi;
        f[e] = w;
      }
      sumAt(t, 0, lanes, 0);
      sumAt(u, 0, lanes, LANES);
      if (!derivatives) {
        continue;
      }
      for (int j = 0; j < m; j++) {
        dot(r, 0, h, j * n + ts, lanes, (2 + j) * LANES);
      }
      sumAt(r, 0, lanes, (2 + m) * LANES);
      for (int j = 0; j < m; j++) {
        int hb = j * n + ts;
        for (int e = 0; e < TILE; e++) {
          t[e] = f[e] * h[hb + e];
        }
        for (int k = 0; k <= j; k++) {
          dot(t, 0, h, k * n + ts, lanes, (hess + j * (j + 1) / 2 + k) * LANES);
        }
        sumAt(t, 0, lanes, (hess + m * (m + 1) / 2 + j) * LANES);
      }
      sumAt(f, 0, lanes, (hess + m * (m + 1) / 2 + m) * LANES);
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
      for (int j = 0; j < nout; j++) {
        int ob = j * TILE;
        double bias = th[b.bOff[l] + j];
        for (int e = 0; e < TILE; e++) {
          out[ob + e] = bias;
        }
        for (int k = 0; k < nin; k++) {
          double w = th[b.wOff[l] + j * nin + k];
          int ib = inBase + k * inStride;
          for (int e = 0; e < TILE; e++) {
            out[ob + e] = Math.fma(w, in[ib + e], out[ob + e]);
          }
        }
        if (sigmoid) {
          for (int e = 0; e < TILE; e++) {
            out[ob + e] = 1.0 / (1.0 + FastExp.exp(-out[ob + e]));
          }
        } else {
          for (int e = 0; e < TILE; e++) {
            double z = out[ob + e];
            out[ob + e] = 1.0 - 2.0 / (1.0 + FastExp.exp(z + z));
          }
        }
      }
    }
  }

  private static void tile(Batch b, double[] th, int ts, Batch.Workspace ws, double[][] acts) {
    final int hidden = b.width.length - 2;
    final int n = b.n;
    final boolean sigmoid = b.arch.activation() == Activation.SIGMOID;
    if (acts == null) {
      forward(b, th, ts, ws);
    } else {
      Kernel.loadTile(b, acts, ts, ws);
    }
    // output layer
    final int lo = hidden + 1;
    final int nlast = b.width[hidden];
    final double[] last = hidden == 0 ? b.x : ws.act[hidden - 1];
    final int lastBase = hidden == 0 ? ts : 0;
    final int lastStride = hidden == 0 ? n : TILE;
    final double[] f = ws.f;
    final double[] dOut = ws.dOut;
    final double[] lanes = ws.lanes;
    double outBias = th[b.bOff[lo]];
    for (int e = 0; e < TILE; e++) {
      f[e] = outBias;
    }
    for (int j = 0; j < nlast; j++) {
      double w = th[b.wOff[lo] + j];
      int ib = lastBase + j * lastStride;
      for (int e = 0; e < TILE; e++) {
        f[e] = Math.fma(w, last[ib + e], f[e]);
      }
    }
    double offset = b.offset;
    for (int e = 0; e < TILE; e++) {
      f[e] = f[e] + offset;
    }
    // loss terms and dℓ/df
    final double[] ca = b.coefA;
    final double[] cb = b.coefB;
    if (b.loss == LossKind.EXTENDED_LIKELIHOOD) {
      for (int e = 0; e < TILE; e++) {
        double fe = f[e];
        double ef = FastExp.exp(fe);
        double a = ca[ts + e];
        double bb = cb[ts + e];
        double term = a * (ef - 1.0) - bb * fe;
        lanes[e & 7] = lanes[e & 7] + term;
        dOut[e] = a * ef - bb;
      }
    } else {
      double[] u = ws.tmp;
      for (int e = 0; e < TILE; e++) {
        double fe = f[e];
        double ue = FastExp.exp(-Math.abs(fe));
        u[e] = ue;
        double s = (fe < 0 ? ue : 1.0) / (ue + 1.0);
        dOut[e] = ca[ts + e] * s - cb[ts + e];
      }
      Kernel.bceLossTerms(f, u, ca, cb, ts, lanes);
    }
    // output-layer gradient
    for (int j = 0; j < nlast; j++) {
      dot(dOut, 0, last, lastBase + j * lastStride, lanes, (1 + b.wOff[lo] + j) * LANES);
    }
    sum(dOut, lanes, (1 + b.bOff[lo]) * LANES);
    if (hidden == 0) {
      return;
    }
    // δ of the last hidden layer
    double[] dl = ws.delta[hidden - 1];
    double[] al = ws.act[hidden - 1];
    for (int j = 0; j < nlast; j++) {
      double w = th[b.wOff[lo] + j];
      int o = j * TILE;
      if (sigmoid) {
        for (int e = 0; e < TILE; e++) {
          double a = al[o + e];
          dl[o + e] = (dOut[e] * w) * (a * (1.0 - a));
        }
      } else {
        for (int e = 0; e < TILE; e++) {
          double a = al[o + e];
          dl[o + e] = (dOut[e] * w) * (1.0 - a * a);
        }
      }
    }
    // hidden layers, last to first
    for (int l = hidden; l >= 1; l--) {
      int nin = b.width[l - 1];
      int nout = b.width[l];
      double[] del = ws.delta[l - 1];
      double[] in = l == 1 ? b.x : ws.act[l - 2];
      int inBase = l == 1 ? ts : 0;
      int inStride = l == 1 ? n : TILE;
      for (int j = 0; j < nout; j++) {
        for (int k = 0; k < nin; k++) {
          dot(del, j * TILE, in, inBase + k * inStride, lanes,
              (1 + b.wOff[l] + j * nin + k) * LANES);
        }
        sumAt(del, j * TILE, lanes, (1 + b.bOff[l] + j) * LANES);
      }
      if (l > 1) {
        double[] prevDelta = ws.delta[l - 2];
        double[] prevAct = ws.act[l - 2];
        for (int k = 0; k < nin; k++) {
          int o = k * TILE;
          double w0 = th[b.wOff[l] + k];
          for (int e = 0; e < TILE; e++) {
            prevDelta[o + e] = w0 * del[e];
          }
          for (int j = 1; j < nout; j++) {
            double w = th[b.wOff[l] + j * nin + k];
            int dj = j * TILE;
            for (int e = 0; e < TILE; e++) {
              prevDelta[o + e] = Math.fma(w, del[dj + e], prevDelta[o + e]);
            }
          }
          if (sigmoid) {
            for (int e = 0; e < TILE; e++) {
              double a = prevAct[o + e];
              prevDelta[o + e] = prevDelta[o + e] * (a * (1.0 - a));
            }
          } else {
            for (int e = 0; e < TILE; e++) {
              double a = prevAct[o + e];
              prevDelta[o + e] = prevDelta[o + e] * (1.0 - a * a);
            }
          }
        }
      }
    }
  }

  /** lanes[lo + (e mod 8)] = fma(u[uo+e], v[vo+e], ·) over the tile. */
  private static void dot(double[] u, int uo, double[] v, int vo, double[] lanes, int lo) {
    double a0 = lanes[lo];
    double a1 = lanes[lo + 1];
    double a2 = lanes[lo + 2];
    double a3 = lanes[lo + 3];
    double a4 = lanes[lo + 4];
    double a5 = lanes[lo + 5];
    double a6 = lanes[lo + 6];
    double a7 = lanes[lo + 7];
    for (int e = 0; e < TILE; e += 8) {
      a0 = Math.fma(u[uo + e], v[vo + e], a0);
      a1 = Math.fma(u[uo + e + 1], v[vo + e + 1], a1);
      a2 = Math.fma(u[uo + e + 2], v[vo + e + 2], a2);
      a3 = Math.fma(u[uo + e + 3], v[vo + e + 3], a3);
      a4 = Math.fma(u[uo + e + 4], v[vo + e + 4], a4);
      a5 = Math.fma(u[uo + e + 5], v[vo + e + 5], a5);
      a6 = Math.fma(u[uo + e + 6], v[vo + e + 6], a6);
      a7 = Math.fma(u[uo + e + 7], v[vo + e + 7], a7);
    }
    lanes[lo] = a0;
    lanes[lo + 1] = a1;
    lanes[lo + 2] = a2;
    lanes[lo + 3] = a3;
    lanes[lo + 4] = a4;
    lanes[lo + 5] = a5;
    lanes[lo + 6] = a6;
    lanes[lo + 7] = a7;
  }

  private static void sum(double[] u, double[] lanes, int lo) {
    sumAt(u, 0, lanes, lo);
  }

  /** lanes[lo + (e mod 8)] += u[uo+e] over the tile. */
  private static void sumAt(double[] u, int uo, double[] lanes, int lo) {
    double a0 = lanes[lo];
    double a1 = lanes[lo + 1];
    double a2 = lanes[lo + 2];
    double a3 = lanes[lo + 3];
    double a4 = lanes[lo + 4];
    double a5 = lanes[lo + 5];
    double a6 = lanes[lo + 6];
    double a7 = lanes[lo + 7];
    for (int e = 0; e < TILE; e += 8) {
      a0 = a0 + u[uo + e];
      a1 = a1 + u[uo + e + 1];
      a2 = a2 + u[uo + e + 2];
      a3 = a3 + u[uo + e + 3];
      a4 = a4 + u[uo + e + 4];
      a5 = a5 + u[uo + e + 5];
      a6 = a6 + u[uo + e + 6];
      a7 = a7 + u[uo + e + 7];
    }
    lanes[lo] = a0;
    lanes[lo + 1] = a1;
    lanes[lo + 2] = a2;
    lanes[lo + 3] = a3;
    lanes[lo + 4] = a4;
    lanes[lo + 5] = a5;
    lanes[lo + 6] = a6;
    lanes[lo + 7] = a7;
  }
}
