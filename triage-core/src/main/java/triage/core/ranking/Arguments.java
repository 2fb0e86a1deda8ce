package triage.core.ranking;

import java.util.Locale;

/**
 * Argument checks for this package. Every check is NaN-safe (a NaN fails every check) and throws
 * {@link RankingArgumentException} with a message naming the quantity and its value.
 */
final class Arguments {
  private Arguments() {
  }

  static RankingArgumentException error(String format, Object... args) {
    return new RankingArgumentException(String.format(Locale.ROOT, format, args));
  }

  static <T> T notNull(String name, T o) {
    if (o == null) {
      throw error("%s must not be null", name);
    }
    return o;
  }

  static int atLeast(String name, int n, int min) {
    if (n < min) {
      throw error("%s must be >= %d but was %d", name, min, n);
    }
    return n;
  }

  static double openProbability(String name, double p) {
    if (!(p > 0 && p < 1)) {
      throw error("%s must be in (0, 1) but was %s", name, p);
    }
    return p;
  }

  static double probability(String name, double p) {
    if (!(p >= 0 && p <= 1)) {
      throw error("%s must be in [0, 1] but was %s", name, p);
    }
    return p;
  }

  /** Values: non-null, at least one, all finite. */
  static double[] finiteValues(String name, double[] x) {
    notNull(name, x);
    if (x.length == 0) {
      throw error("%s must have at least 1 value but had 0", name);
    }
    for (int i = 0; i < x.length; i++) {
      if (!Double.isFinite(x[i])) {
        throw error("%s[%d] must be finite but was %s", name, i, x[i]);
      }
    }
    return x;
  }

  /**
   * Weights: null (unit weights) or the same length as the values, finite, non-negative unless allowed, with a
   * positive total.
   *
   * @return the total weight
   */
  static double weights(String name, double[] w, int n, NegativeWeights policy) {
    if (w == null) {
      return n;
    }
    if (w.length != n) {
      throw error("%s must have %d values (one per event) but had %d", name, n, w.length);
    }
    final triage.core.stats.NeumaierSum total = triage.core.stats.NeumaierSum.create();
    for (int i = 0; i < n; i++) {
      if (!Double.isFinite(w[i])) {
        throw error("%s[%d] must be finite but was %s", name, i, w[i]);
      }
      if (w[i] < 0 && policy == NegativeWeights.REJECT) {
        throw error("%s[%d] must be >= 0 (negative weights are rejected) but was %s", name, i, w[i]);
      }
      total.add(w[i]);
    }
    final double t = total.value();
    if (!(t > 0)) {
      throw error("total of %s must be > 0 but was %s", name, t);
    }
    return t;
  }
}
