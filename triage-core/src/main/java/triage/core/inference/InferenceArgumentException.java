package triage.core.inference;

/**
 * Thrown by the functions of {@code triage.core.inference} when an argument is out of its domain.
 *
 * <p>The message names the quantity and the offending value, formatted with {@link java.util.Locale#ROOT}.
 */
public final class InferenceArgumentException extends IllegalArgumentException {
  private static final long serialVersionUID = 1L;

  /**
   * @param message message naming the quantity and its value
   */
  InferenceArgumentException(String message) {
    super(message);
  }
}
