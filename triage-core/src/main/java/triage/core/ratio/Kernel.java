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
