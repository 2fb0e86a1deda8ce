package triage.index;

import java.io.Closeable;
import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import triage.index.impl.LuceneEventStore;

/**
 * An open event index. Reads are thread-safe; results are deterministic (sums are taken segment by segment
 * and combined in a fixed order).
 */
public interface EventStore extends Closeable {
  /**
   * Opens the index in a folder.
   *
   * @throws IndexException when there is no index, it is damaged, or its format is unknown
   */
  static EventStore open(Path dir) {
    return LuceneEventStore.open(dir);
  }

  /** The folder of the index. */
  Path dir();

  /** What the index holds. */
  Manifest manifest();

  /**
   * A selection from a condition in the syntax of SQL's WHERE clause over this index's columns (see
   * {@link triage.core.select.Where}); the simple conjuncts become the box, the rest a residual.
   *
   * @throws triage.core.select.WhereException with the position of a parse, name or type error
   */
  Selection where(String condition);

  /** What each selectable column holds (features, bookkeeping, variation weights, score columns). */
  Map<String, triage.core.select.Where.Kind> kinds();

  /** Per-sample sums over the selected events, in manifest order (samples not selected have zero sums). */
  List<SampleSums> sums(Selection selection) throws IOException;

  /** Per-sample histograms of a numeric column over the selected events, in manifest order. */
  List<Histogram> histogram(Selection selection, String column, int bins, double lo, double hi)
      throws IOException;

  /** The event of a sample with this id. */
  Optional<EventRecord> event(String sample, long id) throws IOException;

  /**
   * The values of numeric columns for every event of a sample, feature-major and in row order: value of column c
   * for the sample's i-th event is {@code result[c][i]}.
   */
  double[][] columns(String sample, List<String> columns) throws IOException;

  /**
   * The values of numeric columns and the nominal weights of the events a selection keeps in one sample, in row
   * order: {@code columns[c][j]} for the j-th kept event. Reads only the kept events, so a small selection of a
   * large sample costs little (unlike {@link #columns} followed by a mask).
   */
  SelectedRows rows(String sample, List<String> columns, Selection selection) throws IOException;

  /**
   * Values and weights of selected events.
   *
   * @param columns feature-major values
   * @param weights nominal weights
   */
  record SelectedRows(double[][] columns, double[] weights) {}

  /**
   * Which of a sample's events a selection keeps: bit i stands for the sample's i-th event in row order (the same
   * order as {@link #columns} and {@link #weights}).
   */
  java.util.BitSet mask(Selection selection, String sample) throws IOException;

  /** The values of a category column for every event of a sample, in row order. */
  String[] categories(String sample, String column) throws IOException;

  /** The nominal weights of a sample's events, in row order. */
  double[] weights(String sample) throws IOException;

  /**
   * Adds a model version's scores without re-ingesting: one value per index row (all samples, row order), written
   * and registered atomically. Replaces an earlier version of the same name.
   *
   * @param version the version name
   * @param scoresByRow one score per row, length {@link Manifest#totalEvents()}
   * @param modelJson the model's description, stored beside the scores, or null
   * @return the updated manifest
   */
  Manifest addScores(String version, double[] scoresByRow, String modelJson) throws IOException;

  /** The scores of a model version, by row. */
  double[] scores(String version) throws IOException;
}
