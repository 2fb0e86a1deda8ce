package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.fail;

/** Assertions with stated relative tolerances. */
final class Tolerance {
  private Tolerance() {
  }

  /** |actual - expected| <= rel |expected|. */
  static void assertRelative(double expected, double actual, double rel, String what) {
    if (expected == actual) {
      return;
    }
    final double err = Math.abs(actual - expected) / Math.abs(expected);
    if (!(err <= rel)) {
      fail(String.format(java.util.Locale.ROOT, "%s: expected %.17g but was %.17g (relative error %.3g > %.3g)",
        what, expected, actual, err, rel));
    }
  }

  /** |actual - expected| <= abs. */
  static void assertAbsolute(double expected, double actual, double abs, String what) {
    assertEquals(expected, actual, abs, what);
  }
}
