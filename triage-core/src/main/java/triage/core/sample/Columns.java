package triage.core.sample;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;

/**
 * The columns every sample of an analysis shares.
 *
 * @param features numeric input variables, in order (the ratio model's inputs)
 * @param id the integer event id column, unique within a sample
 * @param run the integer run number column, or null
 * @param block the integer luminosity-block column, or null
 * @param categories categorical bookkeeping columns (detector region, trigger, ...), kept as text
 * @param score an optional per-event score column from the user's own model, or null
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Columns(List<String> features, String id, String run, String block, List<String> categories,
    String score) {

  /** Checks names and that no column plays two parts. */
  public Columns {
    if (features == null || features.isEmpty()) {
      throw new IllegalArgumentException("no feature columns: 'features' needs at least one numeric column");
    }
    // (immutable lists refuse contains(null), so test each name)
    if (features.stream().anyMatch(java.util.Objects::isNull)
        || (categories != null && categories.stream().anyMatch(java.util.Objects::isNull))) {
      throw new IllegalArgumentException("a column name is null: every name in 'features' and 'categories' must be "
          + "text");
    }
    features = List.copyOf(features);
    categories = categories == null ? List.of() : List.copyOf(categories);
    checkName("id column", id);
    Set<String> seen = new HashSet<>();
    for (String f : features) {
      checkName("feature column", f);
      requireUnique(seen, f);
    }
    requireUnique(seen, id);
    if (run != null) {
      checkName("run column", run);
      requireUnique(seen, run);
    }
    if (block != null) {
      checkName("block column", block);
      requireUnique(seen, block);
    }
    for (String c : categories) {
      checkName("category column", c);
      requireUnique(seen, c);
    }
    if (score != null) {
      checkName("score column", score);
      requireUnique(seen, score);
    }
  }

  /** Every column named here, in a fixed order: features, id, run, block, categories, score. */
  public List<String> all() {
    List<String> all = new ArrayList<>(features);
    all.add(id);
    if (run != null) {
      all.add(run);
    }
    if (block != null) {
      all.add(block);
    }
    all.addAll(categories);
    if (score != null) {
      all.add(score);
    }
    return all;
  }

  private static void requireUnique(Set<String> seen, String name) {
    if (!seen.add(name)) {
      throw new IllegalArgumentException("column '" + name + "' is named twice");
    }
  }

  /** Checks that a column or sample name is present and made of letters, digits, '_', '.' or '-'. */
  static void checkName(String what, String name) {
    if (name == null || name.isEmpty()) {
      throw new IllegalArgumentException(what + " is missing");
    }
    for (int i = 0; i < name.length(); i++) {
      char c = name.charAt(i);
      if (!(Character.isLetterOrDigit(c) || c == '_' || c == '.' || c == '-')) {
        throw new IllegalArgumentException(what + " '" + name + "' has character '" + c
            + "' (allowed: letters, digits, '_', '.', '-')");
      }
    }
  }
}
