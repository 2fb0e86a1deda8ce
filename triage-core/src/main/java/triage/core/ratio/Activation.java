package triage.core.ratio;

/**
 * Hidden-layer activation of the network.
 *
 * <p>Both are evaluated through {@link FastExp#exp(double)} so that the plain-Java and the
 * vector kernels give bit-identical values:
 * <ul>
 *   <li>{@link #SIGMOID}: σ(z) = 1 / (1 + e^{−z}), derivative σ(1 − σ) computed from the stored
 *       activation;</li>
 *   <li>{@link #TANH}: tanh(z) = 1 − 2 / (1 + e^{2z}), derivative 1 − tanh² computed from the
 *       stored activation. The form has an absolute (not relative) error of a few 1e−16 near
 *       z = 0, which is irrelevant for a hidden unit.</li>
 * </ul>
 * Arguments beyond ±700 saturate (see {@link FastExp}).
 */
public enum Activation {
  /** Logistic sigmoid, the default. */
  SIGMOID,
  /** Hyperbolic tangent. */
  TANH;

  /** Scalar activation, the reference for every kernel. */
  double apply(double z) {
    return this == SIGMOID
        ? 1.0 / (1.0 + FastExp.exp(-z))
        : 1.0 - 2.0 / (1.0 + FastExp.exp(z + z));
  }

  /** Derivative expressed through the activation value {@code a}. */
  double derivativeFromValue(double a) {
    return this == SIGMOID ? a * (1.0 - a) : 1.0 - a * a;
  }
}
