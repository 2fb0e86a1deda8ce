package triage.index.impl;

/**
 * Lucene field names for the index's columns. Features and external scores are {@code DoubleField}s (points
 * for ranges plus doc values for sums), integer bookkeeping are {@code LongField}s, categories are
 * {@code KeywordField}s, weights and variation weights are plain numeric doc values.
 */
final class Fields {
  /** Sample ordinal (IntField). */
  static final String SAMPLE = "_sample";

  /** Index-wide row number (numeric doc values). */
  static final String ROW = "_row";

  /** Nominal weight (double doc values). */
  static final String WEIGHT = "_w";

  /** The stored event (binary stored field). */
  static final String EVENT = "_event";

  /** Commit user-data key holding the manifest JSON. */
  static final String MANIFEST_KEY = "triage.manifest";

  private Fields() {
    // no instance
  }

  /** A double column (feature or external score). */
  static String number(String column) {
    return "x." + column;
  }

  /** An integer column (id, run, block). */
  static String integer(String column) {
    return "i." + column;
  }

  /** A category column. */
  static String category(String column) {
    return "c." + column;
  }

  /** A variation's up weight. */
  static String up(String variation) {
    return "v." + variation + ".up";
  }

  /** A variation's down weight. */
  static String down(String variation) {
    return "v." + variation + ".down";
  }
}
