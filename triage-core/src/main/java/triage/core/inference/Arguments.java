package triage.core.inference;

import java.util.Locale;

/**
 * Argument checks for this package. Every check is NaN-safe (a NaN fails every check) and throws
 * {@link InferenceArgumentException} with a message naming the quantity and its value.
 */
final class Arguments {
  private Arguments() {
  }

  static InferenceArgumentException error(String format, Object... args) {
    return new InferenceArgumentException(String.format(Locale.ROOT, format, args));
  }

  /** Value must be finite. */
  static double finite(String name, double x) {
    if (!Double.isFinite(x)) {
      throw error("%s must be finite but was %s", name, x);
    }
    return x;
  }

  /** Value must be finite and {@code > 0}. */
  static double positive(String name, double x) {
    if (!(x > 0 && x < Double.POSITIVE_INFINITY)) {
      throw error("%s must be finite and > 0 but was %s", name, x);
    }
    return x;
  }

  /** Value must be finite and {@code >= 0}. */
  static double nonNegative(String name, double x) {
    if (!(x >= 0 && x < Double.POSITIVE_INFINITY)) {
      throw error("%s must be finite and >= 0 but was %s", name, x);
    }
    return x;
  }

  /** Value must not be NaN (infinities allowed). */
  static double notNaN(String name, double x) {
    if (Double.isNaN(x)) {
      throw error("%s must not be NaN", name);
    }
    return x;
  }

  /** Value must be in {@code [0, 1]}. */
  static double probability(String name, double p) {
    if (!(p >= 0 && p <= 1)) {
      throw error("%s must be in [0, 1] but was %s", name, p);
    }
    return p;
  }

  /** Value must be in the open interval {@code (0, 1)}. */
  static double openProbability(String name, double p) {
    if (!(p > 0 && p < 1)) {
      throw error("%s must be in (0, 1) but was %s", name, p);
    }
    return p;
  }

  static int nonNegative(String name, int n) {
    if (n < 0) {
      throw error("%s must be >= 0 but was %d", name, n);
    }
    return n;
  }

  static int atLeast(String name, int n, int min) {
    if (n < min) {
      throw error("%s must be >= %d but was %d", name, min, n);
    }
    return n;
  }

  static <T> T notNull(String name, T o) {
    if (o == null) {
      throw error("%s must not be null", name);
    }
    return o;
  }

  /** Array must be non-null with at least {@code min} elements, none of them NaN. */
  static double[] values(String name, double[] x, int min) {
    notNull(name, x);
    if (x.length < min) {
      throw error("%s must have at least %d values but had %d", name, min, x.length);
    }
    for (int i = 0; i < x.length; i++) {
      if (Double.isNaN(x[i])) {
        throw error("%s[%d] must not be NaN", name, i);
      }
    }
    return x;
  }

  /** Array must be non-null with at least {@code min} elements, all finite and {@code > 0}. */
  static double[] positiveValues(String name, double[] x, int min) {
    notNull(name, x);
    if (x.length < min) {
      throw error("%s must have at least %d values but had %d", name, min, x.length);
    }
    for (int i = 0; i < x.length; i++) {
      if (!(x[i] > 0 && x[i] < Double.POSITIVE_INFINITY)) {
        throw error("%s[%d] must be finite and > 0 but was %s", name, i, x[i]);
      }
    }
    return x;
  }
}
