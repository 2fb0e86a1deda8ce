package triage.core.ratio;

/** The clip box [−C, C]^P: projection and projected-gradient norm. */
final class Box {
  private Box() {
  }

  /** Projects x into [−c, c] in place. */
  static void project(double[] x, double c) {
    for (int i = 0; i < x.length; i++) {
      x[i] = Math.min(Math.max(x[i], -c), c);
    }
  }

  /** ‖P(x − g) − x‖_∞ for the box [−c, c]. */
  static double projectedGradientNorm(double[] x, double[] g, double c) {
    double m = 0;
    for (int i = 0; i < x.length; i++) {
      double step = Math.min(Math.max(x[i] - g[i], -c), c) - x[i];
      m = Math.max(m, Math.abs(step));
    }
    return m;
  }
}
