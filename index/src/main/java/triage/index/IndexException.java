package triage.index;

import java.nio.file.Path;
import triage.core.sample.InputException;

/** An index that is missing, damaged, of an unknown format, or asked for something it does not hold. */
public class IndexException extends InputException {
  private static final long serialVersionUID = 1L;

  /** An error about the index in a folder. */
  public IndexException(Path dir, String message) {
    super(dir, message);
  }

  /** An error about the index in a folder, with its cause. */
  public IndexException(Path dir, String message, Throwable cause) {
    super(dir, 0, 0, message, cause);
  }
}
