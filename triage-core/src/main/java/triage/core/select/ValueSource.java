package triage.core.select;

/** The values of one event, by slot number (slots are fixed when a residual is compiled). */
public interface ValueSource {
  /** A numeric column's value. */
  double number(int slot);

  /** A category column's value. */
  String category(int slot);
}
