package triage.core.sample;

import java.nio.file.Path;
import java.util.Locale;

/**
 * Bad input from the user: a file that cannot be read or does not say what was declared.
 * The message is meant for people and names the file, and where known the line and column.
 * The command line shows it without a stack trace and exits with code 3.
 */
public class InputException extends RuntimeException {
  private static final long serialVersionUID = 1L;

  /** The file at fault, or null. */
  private final transient Path file;

  /** The 1-based line, or 0 when unknown. */
  private final long line;

  /** The 1-based column, or 0 when unknown. */
  private final long column;

  /** An error about a whole file (or none). */
  public InputException(Path file, String message) {
    this(file, 0, 0, message, null);
  }

  /**
   * An error at a place in a file.
   *
   * @param file the file, or null
   * @param line the 1-based line, or 0 when unknown
   * @param column the 1-based column, or 0 when unknown
   * @param message what is wrong and what was expected
   * @param cause the underlying error, or null
   */
  public InputException(Path file, long line, long column, String message, Throwable cause) {
    super(place(file, line, column) + message, cause);
    this.file = file;
    this.line = line;
    this.column = column;
  }

  /** The file at fault, or null. */
  public Path file() {
    return file;
  }

  /** The 1-based line, or 0 when unknown. */
  public long line() {
    return line;
  }

  /** The 1-based column, or 0 when unknown. */
  public long column() {
    return column;
  }

  /** {@code file:line:column: } with the parts that are known. */
  static String place(Path file, long line, long column) {
    if (file == null) {
      return "";
    }
    if (line <= 0) {
      return file + ": ";
    }
    if (column <= 0) {
      return String.format(Locale.ROOT, "%s:%d: ", file, line);
    }
    return String.format(Locale.ROOT, "%s:%d:%d: ", file, line, column);
  }
}
