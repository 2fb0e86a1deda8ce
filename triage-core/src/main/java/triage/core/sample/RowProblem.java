package triage.core.sample;

import java.nio.file.Path;
import java.util.Locale;

/**
 * One rejected row: where it is, what it holds and what was expected there.
 *
 * @param file the input file
 * @param line the 1-based line of the row
 * @param column the 1-based column (field) number, or 0 when the problem concerns the whole row
 * @param columnName the column's header name, or null
 * @param text the offending text (cut to 80 characters)
 * @param kind the kind of problem
 * @param expected what was expected, in words
 */
public record RowProblem(Path file, long line, int column, String columnName, String text, Kind kind,
    String expected) {

  /** The kinds of row problem; each is counted separately in an ingest's report. */
  public enum Kind {
    /** The row has more or fewer fields than the header. */
    FIELD_COUNT("field-count"),
    /** A field that must hold a value is empty. */
    EMPTY_VALUE("empty-value"),
    /** A numeric field does not parse as a decimal number. */
    NOT_A_NUMBER("not-a-number"),
    /** A numeric field holds NaN or ±Infinity. */
    NOT_FINITE("not-finite"),
    /**
     * A numeric field holds a decimal number outside the range of doubles: its magnitude rounds to infinity
     * (above about 1.8e308) or, not being zero, to zero (below about 4.9e-324).
     */
    OUT_OF_RANGE("out-of-range"),
    /** An integer field (id, run, block) does not parse as a whole number. */
    NOT_AN_INTEGER("not-an-integer"),
    /** A weight is zero or negative and such weights were not allowed. */
    NON_POSITIVE_WEIGHT("non-positive-weight"),
    /** The event id was already seen in this sample. */
    DUPLICATE_ID("duplicate-id"),
    /** A category value is longer than {@link EventFileReader#MAX_CATEGORY_BYTES} bytes. */
    TOO_LONG("too-long"),
    /** A category value holds bytes that are not UTF-8 (decoded as U+FFFD). */
    NOT_UTF8("not-utf8");

    /** The name used in JSON and rejects files. */
    private final String label;

    Kind(String label) {
      this.label = label;
    }

    /** The name used in JSON and rejects files. */
    public String label() {
      return label;
    }
  }

  /** Checks the place and cuts long text. */
  public RowProblem {
    if (line < 1) {
      throw new IllegalArgumentException("line " + line + " is not 1-based");
    }
    if (column < 0) {
      throw new IllegalArgumentException("column " + column + " is negative");
    }
    if (text != null && text.length() > 80) {
      text = text.substring(0, 77) + "...";
    }
  }

  /** {@code file:line:column: column 'x': found 'text', expected ...}. */
  public String message() {
    StringBuilder b = new StringBuilder(InputException.place(file, line, column));
    if (columnName != null) {
      b.append("column '").append(columnName).append("': ");
    }
    if (text != null) {
      b.append("found '").append(text).append("', ");
    }
    b.append(String.format(Locale.ROOT, "expected %s", expected));
    return b.toString();
  }

  @Override
  public String toString() {
    return message();
  }
}
