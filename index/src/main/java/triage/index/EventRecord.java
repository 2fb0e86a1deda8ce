package triage.index;

import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * One event as stored, fetched by id.
 *
 * @param sample the sample
 * @param row the index-wide row number
 * @param line the input line it was read from
 * @param weight the nominal weight
 * @param numbers numeric columns (features, id, run, block, external score, variation weights, model scores) by
 *     name, in the index's column order
 * @param categories category columns by name, in the index's column order
 */
public record EventRecord(String sample, long row, long line, double weight, Map<String, Double> numbers,
    Map<String, String> categories) {
  /** Copies the maps, keeping their order (so an event is shown and written column by column, every time). */
  public EventRecord {
    numbers = Collections.unmodifiableMap(new LinkedHashMap<>(numbers));
    categories = Collections.unmodifiableMap(new LinkedHashMap<>(categories));
  }
}
