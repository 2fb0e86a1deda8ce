package triage.core.sample;

import java.io.IOException;
import java.io.Reader;

/**
 * Splits unquoted CSV/TSV text into rows of fields without making strings, the fast path of
 * {@link EventFileReader}. It gives the same rows and line numbers as Commons CSV with the reader's format
 * (delimiter, double quote, empty lines kept, no trimming) for any text without a double quote: a row ends at
 * {@code \n}, {@code \r\n} or a lone {@code \r}; an empty line is a row of one empty field; text after the last
 * line break is a row when it is not empty. On the first line holding a double quote it stops before that line
 * ({@link #quoted()}) and hands the rest of the text over ({@link #rest()}), so quoted fields go through Commons
 * CSV. Checked against Commons CSV on generated text in {@code LineSplitterTest}.
 *
 * <p>Mutable scratch state of one read; not shared between threads.
 */
final class LineSplitter {
  /** Where the text comes from. */
  private final Reader in;

  /** The field delimiter. */
  private final char delimiter;

  /** Buffered text; the current row starts at {@link #rowStart}. */
  private char[] buf = new char[1 << 16];

  /** Start of the row being read (or of the quoted line met). */
  private int rowStart;

  /** Next character to look at. */
  private int pos;

  /** End of the valid text in {@link #buf}. */
  private int limit;

  /** Whether the reader is exhausted. */
  private boolean eof;

  /** Line breaks consumed so far (the current row starts on line {@code lines + 1}). */
  private long lines;

  /** Whether reading stopped at a line holding a double quote. */
  private boolean quoted;

  LineSplitter(Reader in, char delimiter) {
    this.in = in;
    this.delimiter = delimiter;
  }

  /** Line breaks consumed before the current (or next) row. */
  long linesBefore() {
    return lines;
  }

  /** Whether reading stopped at a line holding a double quote (then {@link #rest()} holds that line onwards). */
  boolean quoted() {
    return quoted;
  }

  /**
   * Reads the next row into {@code row}.
   *
   * @return false at the end of the text, or when the next line holds a double quote ({@link #quoted()})
   * @throws IOException when the text cannot be read
   */
  boolean next(RowFields row) throws IOException {
    if (quoted) {
      return false;
    }
    rowStart = pos;
    row.size = 0;
    // Field bounds are kept relative to the row's start while scanning, since reading more text moves the row.
    int fieldStart = 0;
    while (true) {
      if (pos >= limit) {
        if (!fill()) {
          if (pos == rowStart) {
            return false;
          }
          row.add(fieldStart, pos - rowStart);
          finish(row);
          return true;
        }
        continue;
      }
      char c = buf[pos];
      if (c == delimiter) {
        row.add(fieldStart, pos - rowStart);
        pos++;
        fieldStart = pos - rowStart;
      } else if (c == '\n' || c == '\r') {
        row.add(fieldStart, pos - rowStart);
        pos++;
        if (c == '\r') {
          if (pos >= limit) {
            fill();
          }
          if (pos < limit && buf[pos] == '\n') {
            pos++;
          }
        }
        lines++;
        finish(row);
        return true;
      } else if (c == '"') {
        quoted = true;
        pos = rowStart;
        row.size = 0;
        return false;
      } else {
        pos++;
      }
    }
  }

  /** Turns the row's field bounds into positions in the buffer. */
  private void finish(RowFields row) {
    row.chars = buf;
    for (int k = 0; k < row.size; k++) {
      row.from[k] += rowStart;
      row.to[k] += rowStart;
    }
  }

  /**
   * Moves the current row to the start of the buffer (growing it when the row fills it) and reads more text.
   * Afterwards positions are shifted by the old {@link #rowStart}.
   *
   * @return false at the end of the text
   */
  private boolean fill() throws IOException {
    if (eof) {
      return false;
    }
    int keep = limit - rowStart;
    if (keep == buf.length) {
      buf = java.util.Arrays.copyOf(buf, buf.length * 2);
    }
    if (rowStart > 0) {
      System.arraycopy(buf, rowStart, buf, 0, keep);
    }
    pos -= rowStart;
    rowStart = 0;
    limit = keep;
    int n = in.read(buf, limit, buf.length - limit);
    while (n == 0) {
      n = in.read(buf, limit, buf.length - limit);
    }
    if (n < 0) {
      eof = true;
      return false;
    }
    limit += n;
    return true;
  }

  /** The text from the quoted line on: what is left in the buffer, then the rest of the reader. */
  Reader rest() {
    return new Reader() {
      @Override
      public int read(char[] cbuf, int off, int len) throws IOException {
        if (len == 0) {
          return 0;
        }
        if (rowStart < limit) {
          int n = Math.min(len, limit - rowStart);
          System.arraycopy(buf, rowStart, cbuf, off, n);
          rowStart += n;
          return n;
        }
        return in.read(cbuf, off, len);
      }

      @Override
      public void close() {
        // the caller closes the underlying reader
      }
    };
  }
}
