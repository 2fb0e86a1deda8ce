package triage.core.select;

import triage.core.sample.InputException;

/** A selection that does not parse, names an unknown column, or mixes types; the message points at the place. */
public final class WhereException extends InputException {
  private static final long serialVersionUID = 1L;

  /** The 0-based position in the text. */
  private final int position;

  /**
   * An error at a position of a condition.
   *
   * @param text the whole condition
   * @param position the 0-based position of the problem
   * @param message what is wrong and what was expected
   */
  public WhereException(String text, int position, String message) {
    super(null, 0, 0, "selection: " + message + " at position " + (position + 1) + "\n  " + text + "\n  "
        + " ".repeat(Math.max(0, Math.min(position, text.length()))) + "^", null);
    this.position = position;
  }

  /** The 0-based position in the text. */
  public int position() {
    return position;
  }
}
