package triage.index.impl;

/**
 * Lucene field names. Each event is one document with: a {@code FloatPoint} per feature (and for an external
 * score; index format 1 had {@code DoublePoint}s), {@code LongPoint}s for the id and run, a {@code StringField} per
 * category, and the event's {@link Layout binary form} once, as binary doc values (read by sums, histograms,
 * column scans and fetching by id; format 1 also kept it as a stored field, no longer written or read). Other
 * columns (block, variation weights) are selected by reading the binary form.
 *
 * <p>Why so few fields: Lucene's cost per indexed field and event dominates ingest (measured: about 0.6 µs per
 * point value to build the BKD trees, a similar cost per numeric doc-values field), so every value lives once
 * in the binary form and only the columns that box selections use most get points. Float points (4 bytes) are
 * cheaper to sort and write than double points (8 bytes); a range on a double column asks the float points for a
 * superset and checks each candidate's double value in the binary form, so selections stay exact.
 */
final class Fields {
  /** The event's binary form (binary doc values). */
  static final String EVENT = "_event";

  /** Commit user-data key holding the manifest JSON. */
  static final String MANIFEST_KEY = "triage.manifest";

  private Fields() {
    // no instance
  }

  /**
   * Whether an index of this format has a {@code DoublePoint} per double column (format 1) rather than a
   * {@code FloatPoint} (format 2 on), whose matches are checked exactly against the binary form.
   */
  static boolean hasDoublePoints(String format) {
    return "triage-index/1".equals(format);
  }

  /** A point column (feature, external score, id, run). */
  static String point(String column) {
    return "p." + column;
  }

  /** A category column. */
  static String category(String column) {
    return "c." + column;
  }
}
