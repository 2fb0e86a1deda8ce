package triage.core.ranking;

/**
 * How {@link BinnedJensenShannon} bins a variable: fixed edges, or edges at weighted quantiles of the reference.
 */
public sealed interface Binning {
  /**
   * Fixed bin edges: bins {@code [e_k, e_{k+1})}, the last one closed {@code [e_{K-1}, e_K]}.
   *
   * @param edges strictly increasing finite edges, at least two (copied)
   */
  record Edges(double[] edges) implements Binning {
    /** Validates and copies the edges. */
    public Edges {
      Arguments.notNull("bin edges", edges);
      if (edges.length < 2) {
        throw Arguments.error("bin edges must have at least 2 values but had %d", edges.length);
      }
      edges = edges.clone();
      for (int i = 0; i < edges.length; i++) {
        if (!Double.isFinite(edges[i])) {
          throw Arguments.error("bin edges[%d] must be finite but was %s", i, edges[i]);
        }
        if (i > 0 && !(edges[i] > edges[i - 1])) {
          throw Arguments.error("bin edges must increase strictly but edges[%d] = %s after %s", i, edges[i],
            edges[i - 1]);
        }
      }
    }

    /** @return a copy of the edges */
    @Override
    public double[] edges() {
      return edges.clone();
    }

    @Override
    public boolean equals(Object o) {
      return o instanceof Edges e && java.util.Arrays.equals(edges, e.edges);
    }

    @Override
    public int hashCode() {
      return java.util.Arrays.hashCode(edges);
    }

    @Override
    public String toString() {
      return "Edges" + java.util.Arrays.toString(edges);
    }
  }

  /**
   * Edges at the weighted reference quantiles {@code k/bins}, {@code k = 0..bins} (minimum and maximum at the
   * ends); the quantile at level q is the smallest reference value whose cumulative weight fraction is
   * {@code >= q}; coinciding edges (ties) are merged, so fewer bins may result.
   *
   * @param bins number of bins ({@code >= 1})
   */
  record ReferenceQuantiles(int bins) implements Binning {
    /** Validates the number of bins. */
    public ReferenceQuantiles {
      Arguments.atLeast("number of bins", bins, 1);
    }
  }

  /**
   * @param edges strictly increasing finite edges
   * @return fixed binning
   */
  static Binning edges(double... edges) {
    return new Edges(edges);
  }

  /**
   * @param bins number of bins
   * @return quantile binning of the reference
   */
  static Binning referenceQuantiles(int bins) {
    return new ReferenceQuantiles(bins);
  }
}
