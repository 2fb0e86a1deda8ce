package triage.core.ranking;

/**
 * The inner loop of the permutation KS test: the weighted KS distances of eight labelings at once along one
 * feature's sorted order (see {@link MaxTPermutationTest#testKolmogorovSmirnov}). Two implementations perform the
 * same IEEE-754 operations per lane in the same order, so they give bit-identical distances: plain Java, and one
 * on the incubating Vector API (one double lane per labeling) used when the module
 * {@code jdk.incubator.vector} is present and the machine has 256- or 512-bit vectors.
 */
interface KsBlock {
  /** Labelings per call. */
  int LANES = 8;

  /**
   * @param order event indices in ascending order of the feature
   * @param sortedWeight the weight at each sorted position
   * @param runEnd whether a tie run ends at each position
   * @param packed bit j of {@code packed[e]}: event e is labelled observed in labeling j
   * @param a per labeling {@code 1/wo + 1/(W − wo)}
   * @param c per labeling {@code 1/(W − wo)}
   * @param d out: per labeling the distance {@code max over run ends |co a − C c|}
   */
  void run(int[] order, double[] sortedWeight, boolean[] runEnd, byte[] packed, double[] a, double[] c, double[] d);

  /**
   * The distances of eight null draws from a weighted reference (see {@link ReferenceDrawTest}): along the sorted
   * order, lane j adds {@code t_j = u a_j + v c_j} at the positions drawn in draw j, and
   * {@code d_j = max over run ends |s_j − C c_j|} with C all v up to the position; that is the pseudo-observed
   * share {@code a_j Σ u} minus the pseudo-reference share {@code c_j (C − Σ v)}.
   *
   * @param order event indices in ascending order of the feature
   * @param sortedU the pseudo-observed weight u at each sorted position
   * @param sortedV the pseudo-reference weight v at each sorted position
   * @param runEnd whether a tie run ends at each position
   * @param packed bit j of {@code packed[e]}: event e is drawn in draw j
   * @param a per draw {@code 1/Σ_drawn u}
   * @param c per draw {@code 1/Σ_not drawn v}
   * @param d out: per draw the distance (NaN when a or c is)
   */
  void runDraws(int[] order, double[] sortedU, double[] sortedV, boolean[] runEnd, byte[] packed, double[] a,
      double[] c, double[] d);

  /** The vector implementation when available, else plain Java. */
  static KsBlock best() {
    return Holder.BEST;
  }

  /** Plain Java. */
  static KsBlock scalar() {
    return Holder.SCALAR;
  }

  /** Resolved once. */
  final class Holder {
    static final KsBlock SCALAR = new ScalarKsBlock();
    static final KsBlock BEST = load();

    private Holder() {
    }

    private static KsBlock load() {
      if (ModuleLayer.boot().findModule("jdk.incubator.vector").isEmpty()) {
        return SCALAR;
      }
      try {
        KsBlock v = (KsBlock) Class.forName("triage.core.ranking.VectorKsBlock").getDeclaredConstructor()
            .newInstance();
        return v;
      } catch (ReflectiveOperationException | LinkageError | RuntimeException e) {
        return SCALAR;
      }
    }
  }
}
