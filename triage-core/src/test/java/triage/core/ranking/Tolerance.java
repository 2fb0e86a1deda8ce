package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.fail;

/** Assertions with stated relative tolerances. */
final class Tolerance {
  private Tolerance() {
  }

  /** |actual - expected| <= rel |expected| (exact equality always passes). */
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
}
