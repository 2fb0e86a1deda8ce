package triage.core.ratio;

/**
 * The padded, standardised event arrays a kernel reads, plus the per-event loss coefficients.
 *
 * <p>Events are the reference sample followed by the observed sample, padded with zero events
 * up to a multiple of {@link Kernel#TILE}. Features are feature-major: standardised feature k of
 * event e at {@code x[k·n + e]}. Every loss is written as a sum of per-event terms with two
 * coefficients A_e and B_e (zero for padding, so padding contributes exactly nothing):
 * <ul>
 *   <li>extended likelihood: ℓ_e = A_e (e^{f_e} − 1) − B_e f_e, ∂ℓ/∂f = A_e e^{f_e} − B_e, with
 *       A = w (reference) or 0 (observed) and B = 0 (reference) or 1 (observed);</li>
 *   <li>cross entropy: ℓ_e = A_e softplus(f_e) − B_e f_e, ∂ℓ/∂f = A_e σ(f_e) − B_e, with
 *       A = w^B (reference) or 1 (observed) and B as above.</li>
 * </ul>
 * f_e = net(x_e) + offset.
 *
 * <p>Doubles rather than floats: the loss is a sum of ~10^5 terms whose total (≈ t/2) is a small
 * difference of two sums of size ≈ N_obs; float storage and arithmetic would leave the loss with
 * ~1e−7 relative noise, too coarse for a line search and the 1e−8 stopping tolerance, and it
 * would make t itself (a few tens to hundreds) uncertain in its fourth or fifth digit. The cost
 * of doubles, measured by {@code FitBenchmark} on the 2-core AVX2 development machine: ≈ 2.1 ns
 * per double exponential against ≈ 0.7 ns for a float one (8 lanes instead of 4, and a
 * degree-6 instead of a degree-13 polynomial), i.e. at most ≈ 2.5× on the exponential share of
 * an evaluation; features are read once per evaluation, so memory traffic is not the limit.
 * Measured with float kernels (2026-12-03): 2.2× faster per evaluation, but float-phase fits
 * ended at a lower t, as did double fits fed with parameters rounded to float (contributor
 * guide, "Measured figures").
 */
final class Batch {
  /** Network shape. */
  final Architecture arch;
  /** Loss whose terms the kernel evaluates. */
  final LossKind loss;
  /** Padded event count (multiple of {@link Kernel#TILE}). */
  final int n;
  /** Standardised features, feature-major, length d·n. */
  final double[] x;
  /** Coefficient A_e per event. */
  final double[] coefA;
  /** Coefficient B_e per event. */
  final double[] coefB;
  /** Constant added to the network output. */
  final double offset;
  /** Layer widths n_0..n_{L+1}. */
  final int[] width;
  /** Weight offsets per layer (index 1..L+1). */
  final int[] wOff;
  /** Bias offsets per layer (index 1..L+1). */
  final int[] bOff;

  Batch(Architecture arch, LossKind loss, int n, double[] x, double[] coefA, double[] coefB,
     double offset) {
    if (n % Kernel.TILE != 0 || x.length != arch.inputs() * n || coefA.length != n
        || coefB.length != n) {
      throw new IllegalArgumentException("inconsistent batch sizes");
    }
    this.arch = arch;
    this.loss = loss;
    this.n = n;
    this.x = x;
    this.coefA = coefA;
    this.coefB = coefB;
    this.offset = offset;
    int layers = arch.layerCount();
    this.width = new int[layers + 1];
    this.wOff = new int[layers + 1];
    this.bOff = new int[layers + 1];
    for (int l = 0; l <= layers; l++) {
      width[l] = arch.width(l);
      if (l > 0) {
        wOff[l] = arch.weightOffset(l);
        bOff[l] = arch.biasOffset(l);
      }
    }
  }

  /** Same features, other loss coefficients and offset. */
  Batch with(LossKind otherLoss, double[] a, double[] b, double otherOffset) {
    return new Batch(arch, otherLoss, n, x, a, b, otherOffset);
  }

  /** Padded size for {@code events} real events. */
  static int paddedSize(int events) {
    return (events + Kernel.TILE - 1) / Kernel.TILE * Kernel.TILE;
  }

  /**
   * Standardised, padded feature array of reference then observed events.
   */
  static double[] standardisedFeatures(TrainingData data, Standardisation st, int n) {
    int d = data.features();
    int nr = data.referenceCount();
    int no = data.observedCount();
    double[] ref = data.referenceView();
    double[] obs = data.observedView();
    double[] x = new double[d * n];
    for (int k = 0; k < d; k++) {
      for (int i = 0; i < nr; i++) {
        x[k * n + i] = st.apply(k, ref[k * nr + i]);
      }
      for (int j = 0; j < no; j++) {
        x[k * n + nr + j] = st.apply(k, obs[k * no + j]);
      }
    }
    return x;
  }

  /** Per-event working storage of one worker thread. */
  static final class Workspace {
    /** Activations of hidden layer l at act[l−1][j·TILE + e]. */
    final double[][] act;
    /** Back-propagated ∂L/∂z of hidden layer l at delta[l−1][j·TILE + e]. */
    final double[][] delta;
    /** Network output f per event of the tile. */
    final double[] f;
    /** ∂ℓ/∂f per event of the tile. */
    final double[] dOut;
    /** Scratch per event of the tile. */
    final double[] tmp;
    /** Eight accumulator lanes per slot: slot 0 loss, slot 1+p gradient of θ_p. */
    final double[] lanes;
    /** Second scratch per event of the tile. */
    final double[] tmp2;
    /** Eight lanes per slot of {@link Kernel#outputSums} (see there). */
    final double[] outputLanes;

    Workspace(Architecture arch) {
      int hidden = arch.hiddenWidths().size();
      act = new double[hidden][];
      delta = new double[hidden][];
      for (int l = 1; l <= hidden; l++) {
        act[l - 1] = new double[arch.width(l) * Kernel.TILE];
        delta[l - 1] = new double[arch.width(l) * Kernel.TILE];
      }
      f = new double[Kernel.TILE];
      dOut = new double[Kernel.TILE];
      tmp = new double[Kernel.TILE];
      lanes = new double[(arch.parameterCount() + 1) * Kernel.LANES];
      tmp2 = new double[Kernel.TILE];
      outputLanes = new double[Kernel.outputSlots(arch.width(hidden)) * Kernel.LANES];
    }
  }
}
