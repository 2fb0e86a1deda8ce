package triage.index;

import java.util.Map;

/**
 * One event as stored, fetched by id.
 *
 * @param sample the sample
 * @param row the index-wide row number
 * @param line the input line it was read from
 * @param weight the nominal weight
 * @param numbers numeric columns (features, id, run, block, external score, variation weights) by name
 * @param categories category columns by name
 */
public record EventRecord(String sample, long row, long line, double weight, Map<String, Double> numbers,
    Map<String, String> categories) {
  /** Copies the maps. */
  public EventRecord {
    numbers = Map.copyOf(numbers);
    categories = Map.copyOf(categories);
  }
}
