package triage.core.sample;

import java.util.List;

/**
 * A reusable block of events held in primitive arrays, as read from one sample file.
 *
 * <p>Layout (row-major within the batch, so that one event's values are adjacent):
 * feature k of event i is {@code features[i * featureCount + k]}; the up and down weights of variation j are
 * {@code variations[(i * variationCount + j) * 2]} and {@code ... + 1}; category column k holds a code into
 * {@link #categoryValues(int)}. Observed events and reference files without a weight column weigh exactly one.
 *
 * <p>A batch is filled by {@link EventFileReader} and handed to a sink, which must copy what it keeps: the
 * reader reuses the arrays for the next batch.
 */
public final class EventBatch {
  /** The most events the batch holds. */
  private final int capacity;

  /** The number of feature columns. */
  private final int featureCount;

  /** The number of variations (pairs of weight columns). */
  private final int variationCount;

  /** The number of category columns. */
  private final int categoryCount;

  /** Whether a run column exists. */
  private final boolean hasRun;

  /** Whether a block column exists. */
  private final boolean hasBlock;

  /** Whether an external score column exists. */
  private final boolean hasScore;

  /** Dictionaries of category values, one per category column, shared over the batches of one file. */
  private final List<List<String>> categoryValues;

  /** The events held now. */
  private int size;

  /** Feature values, row-major. */
  final double[] features;

  /** Nominal weights. */
  final double[] weights;

  /** Variation weights, row-major, up then down. */
  final double[] variations;

  /** Event ids. */
  final long[] ids;

  /** Run numbers (zeros when absent). */
  final long[] runs;

  /** Luminosity blocks (zeros when absent). */
  final long[] blocks;

  /** Category codes, row-major. */
  final int[] categories;

  /** External scores (unused when absent). */
  final double[] scores;

  /** The 1-based input line of each event. */
  final long[] lines;

  EventBatch(int capacity, int featureCount, int variationCount, int categoryCount, boolean hasRun,
      boolean hasBlock, boolean hasScore, List<List<String>> categoryValues) {
    this.capacity = capacity;
    this.featureCount = featureCount;
    this.variationCount = variationCount;
    this.categoryCount = categoryCount;
    this.hasRun = hasRun;
    this.hasBlock = hasBlock;
    this.hasScore = hasScore;
    this.categoryValues = categoryValues;
    this.features = new double[capacity * featureCount];
    this.weights = new double[capacity];
    this.variations = new double[capacity * variationCount * 2];
    this.ids = new long[capacity];
    this.runs = new long[capacity];
    this.blocks = new long[capacity];
    this.categories = new int[capacity * categoryCount];
    this.scores = new double[hasScore ? capacity : 0];
    this.lines = new long[capacity];
  }

  /** The events held now. */
  public int size() {
    return size;
  }

  /** The most events the batch holds. */
  public int capacity() {
    return capacity;
  }

  /** The number of feature columns. */
  public int featureCount() {
    return featureCount;
  }

  /** The number of variations. */
  public int variationCount() {
    return variationCount;
  }

  /** The number of category columns. */
  public int categoryCount() {
    return categoryCount;
  }

  /** Whether a run column exists. */
  public boolean hasRun() {
    return hasRun;
  }

  /** Whether a block column exists. */
  public boolean hasBlock() {
    return hasBlock;
  }

  /** Whether an external score column exists. */
  public boolean hasScore() {
    return hasScore;
  }

  /** Feature k of event i. */
  public double feature(int i, int k) {
    return features[i * featureCount + k];
  }

  /** The nominal weight of event i. */
  public double weight(int i) {
    return weights[i];
  }

  /** The up weight of variation j for event i. */
  public double up(int i, int j) {
    return variations[(i * variationCount + j) * 2];
  }

  /** The down weight of variation j for event i. */
  public double down(int i, int j) {
    return variations[(i * variationCount + j) * 2 + 1];
  }

  /** The id of event i. */
  public long id(int i) {
    return ids[i];
  }

  /** The run of event i (0 when there is no run column). */
  public long run(int i) {
    return runs[i];
  }

  /** The luminosity block of event i (0 when there is no block column). */
  public long block(int i) {
    return blocks[i];
  }

  /** The code of category column k for event i. */
  public int categoryCode(int i, int k) {
    return categories[i * categoryCount + k];
  }

  /** The text of category column k for event i. */
  public String category(int i, int k) {
    return categoryValues.get(k).get(categoryCode(i, k));
  }

  /** The distinct values of category column k seen so far, indexed by code. */
  public List<String> categoryValues(int k) {
    return categoryValues.get(k);
  }

  /** The external score of event i. */
  public double score(int i) {
    return scores[i];
  }

  /** The 1-based input line of event i. */
  public long line(int i) {
    return lines[i];
  }

  /**
   * A copy holding only the filled events, safe to keep (and read from another thread) after the reader reuses
   * this batch. The category dictionaries are snapshot, which costs one copy of the distinct values per batch.
   */
  public EventBatch copy() {
    List<List<String>> snapshot = new java.util.ArrayList<>(categoryValues.size());
    for (List<String> values : categoryValues) {
      snapshot.add(List.copyOf(values));
    }
    EventBatch c = new EventBatch(Math.max(size, 1), featureCount, variationCount, categoryCount, hasRun,
        hasBlock, hasScore, snapshot);
    System.arraycopy(features, 0, c.features, 0, size * featureCount);
    System.arraycopy(weights, 0, c.weights, 0, size);
    System.arraycopy(variations, 0, c.variations, 0, size * variationCount * 2);
    System.arraycopy(ids, 0, c.ids, 0, size);
    System.arraycopy(runs, 0, c.runs, 0, size);
    System.arraycopy(blocks, 0, c.blocks, 0, size);
    System.arraycopy(categories, 0, c.categories, 0, size * categoryCount);
    if (hasScore) {
      System.arraycopy(scores, 0, c.scores, 0, size);
    }
    System.arraycopy(lines, 0, c.lines, 0, size);
    c.size = size;
    return c;
  }

  /** Empties the batch for reuse. */
  void clear() {
    size = 0;
  }

  /** Marks one more event as filled; returns its slot. */
  int next() {
    return size;
  }

  /** Keeps the event written at the current slot. */
  void commit() {
    size++;
  }

  /** Whether the batch is full. */
  boolean full() {
    return size == capacity;
  }
}
