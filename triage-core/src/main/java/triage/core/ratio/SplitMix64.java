package triage.core.ratio;

/**
 * SplitMix64 generator ("Fast splittable pseudorandom number
 * generators", OOPSLA 2014; finaliser constants from the published algorithm). Implemented here
 * so that a seed reproduces the same initial parameters on every JDK.
 *
 * <p>Not thread-safe; one instance per stream.
 */
final class SplitMix64 {
  /** Golden-ratio increment. */
  static final long GOLDEN = 0x9E3779B97F4A7C15L;
  /** Current state. */
  private long state;
  /** Second Gaussian of the last Box–Muller pair, or NaN. */
  private double spare = Double.NaN;

  SplitMix64(long seed) {
    this.state = seed;
  }

  /** The SplitMix64 finaliser, a bijective 64-bit mix. */
  static long mix(long z) {
    z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
    z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
    return z ^ (z >>> 31);
  }

  /** Seed of random start {@code index} derived from the run seed. */
  static long derive(long seed, int index) {
    return mix(seed + GOLDEN * (index + 1L));
  }

  /** Next 64 random bits. */
  long nextLong() {
    state += GOLDEN;
    return mix(state);
  }

  /** Uniform double in [0, 1) with 53 random bits. */
  double nextDouble() {
    return (nextLong() >>> 11) * 0x1.0p-53;
  }

  /** Standard normal deviate by the Box–Muller transform. */
  double nextGaussian() {
    if (!Double.isNaN(spare)) {
      double s = spare;
      spare = Double.NaN;
      return s;
    }
    double u1 = 1.0 - nextDouble();
    double u2 = nextDouble();
    double radius = Math.sqrt(-2.0 * Math.log(u1));
    double angle = 2.0 * Math.PI * u2;
    spare = radius * Math.sin(angle);
    return radius * Math.cos(angle);
  }

  /** Exponential deviate with the given rate. */
  double nextExponential(double rate) {
    return -Math.log(1.0 - nextDouble()) / rate;
  }
}
