package triage.core.ratio;

/**
 * Evaluates the loss and its gradient over a range of events of a {@link Batch}.
 *
 * <p>Contract: events are processed in tiles of {@link #TILE}; every sum over events (the loss
 * and each gradient component) is kept in {@link #LANES} logical lanes, event e going to lane
 * e mod 8 in increasing e order, accumulated into {@code ws.lanes} (slot q at
 * {@code q·LANES}; slot 0 = loss, slot 1+p = ∂L/∂θ_p). Implementations must perform the same
 * IEEE-754 operations per event in the same order, so that all kernels give bit-identical lanes.
 */
interface Kernel {
  /** Logical accumulator lanes per sum. */
  int LANES = 8;
  /** Events per tile (cache blocking); a multiple of {@link #LANES}. */
  int TILE = 256;

  /** Adds the contributions of events [start, end) (multiples of TILE) to {@code ws.lanes}. */
  void accumulate(Batch batch, double[] theta, int start, int end, Batch.Workspace ws);

  /** The hidden layers' forward pass of the tile at event {@code ts}, into {@code ws.act} (as {@link #accumulate}). */
  void forwardTile(Batch batch, double[] theta, int ts, Batch.Workspace ws);

  /**
   * Writes the hidden layers' activations of events [start, end) (multiples of TILE) into {@code acts[l][j·n + i]}
   * (layer l + 1, unit j, event i, n = the batch's padded size) for every l whose array is not null: the same forward
   * pass as {@link #accumulate}, bit for bit, without the output layer. Needs at least one hidden layer.
   */
  default void hidden(Batch batch, double[] theta, int start, int end, Batch.Workspace ws, double[][] acts) {
    for (int ts = start; ts < end; ts += TILE) {
      forwardTile(batch, theta, ts, ws);
      for (int l = 0; l < acts.length; l++) {
        if (acts[l] != null) {
          for (int j = 0; j < batch.width[l + 1]; j++) {
            System.arraycopy(ws.act[l], j * TILE, acts[l], j * batch.n + ts, TILE);
          }
        }
      }
    }
  }

  /** out[q] = the sum of slot q's eight lanes, lane 0 to 7 in order, for q &lt; {@code slots}. */
  static void sumLanes(double[] lanes, double[] out, int slots) {
    for (int q = 0; q < slots; q++) {
      int o = q * LANES;
      double s = lanes[o];
      for (int l = 1; l < LANES; l++) {
        s += lanes[o + l];
      }
      out[q] = s;
    }
  }

  /** Copies the kept activations of the tile at event {@code ts} into {@code ws.act} (the inverse of {@link #hidden}). */
  static void loadTile(Batch batch, double[][] acts, int ts, Batch.Workspace ws) {
    for (int l = 0; l < acts.length; l++) {
      for (int j = 0; j < batch.width[l + 1]; j++) {
        System.arraycopy(acts[l], j * batch.n + ts, ws.act[l], j * TILE, TILE);
      }
    }
  }

  /**
   * {@link #accumulate} with the hidden layers' activations read from {@code acts} (every layer, as {@link #hidden}
   * wrote them for the same θ) instead of computed: the same lanes, bit for bit.
   */
  void accumulateFrom(Batch batch, double[] theta, double[][] acts, int start, int end, Batch.Workspace ws);

  /**
   * Adds the sums of the extended loss over events [start, end) (multiples of TILE) for output-layer parameters
   * {@code a} (m weights, then the bias) and the last hidden layer's activations {@code h} (as written by
   * {@link #hidden}, h[j·n + i]), into {@code ws.outputLanes}: slot 0 the loss Σ A(e^f − 1) − B f, slot 1 Σ (A e^f + B), and with
   * {@code derivatives} slots 2 … m+2 the gradient Σ (A e^f − B) ĥ_j and then the Hessian Σ A e^f ĥ_j ĥ_k (k ≤ j, at
   * 2 + (m+1) + j(j+1)/2 + k), with ĥ = (h, 1). Per tile: f = a_m, f = fma(a_j, h_j, f) for j = 0..m−1, f = f + offset;
   * u = e^f; w = A·u; loss term A·(u − 1) − B·f; scale term w + B; r = w − B; then the lanes as {@code dot} (fma)
   * and {@code sum} (add) of r, of w·h_j, and of w, in the slot order above. Bit-identical across kernels.
   */
  void outputSums(Batch batch, double[] h, double[] a, int start, int end, boolean derivatives, Batch.Workspace ws);

  /** Slots of {@link #outputSums} for a last hidden layer of width m. */
  static int outputSlots(int m) {
    int q = m + 1;
    return 2 + q + q * (q + 1) / 2;
  }

  /** Short name for reports. */
  String name();

  /**
   * Cross-entropy loss terms A (max(f,0) + log1p(u)) − B f with u = e^{−|f|} for one tile,
   * added to lane slot 0; shared by all kernels (scalar {@link Math#log1p}).
   */
  static void bceLossTerms(double[] f, double[] u, double[] coefA, double[] coefB, int ts,
               double[] lanes) {
    for (int e = 0; e < TILE; e++) {
      double fe = f[e];
      double term = coefA[ts + e] * (Math.max(fe, 0.0) + Math.log1p(u[e])) - coefB[ts + e] * fe;
      lanes[e & 7] = lanes[e & 7] + term;
    }
  }
}
