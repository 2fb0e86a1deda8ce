package triage.core.ratio;

/**
 * Which loss-and-gradient kernel evaluates the chunks.
 *
 * <p>Both kernels perform the same IEEE-754 operations per event in the same order and keep
 * eight logical accumulator lanes per sum, so they return bit-identical losses and gradients;
 * the choice affects speed only. {@link #AUTO} picks {@link #VECTOR} when the module
 * {@code jdk.incubator.vector} is present in the boot layer, else {@link #SCALAR}.
 * {@link #VECTOR} falls back to {@link #SCALAR} when the module is absent.
 */
public enum KernelChoice {
  /** Vector kernel when available, else plain Java. */
  AUTO,
  /** Plain-Java kernel. */
  SCALAR,
  /** Vector API kernel (falls back to plain Java when the module is absent). */
  VECTOR
}
