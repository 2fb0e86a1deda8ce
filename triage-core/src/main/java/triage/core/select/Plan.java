package triage.core.select;

import java.util.List;
import java.util.Set;

/**
 * A condition split for an index: a box (closed numeric ranges and category sets, all of which must hold) that the
 * index can answer from its own structures, and a residual (or null) that must also hold, tested per event.
 * The split is exact: box ∧ residual ⇔ the condition.
 *
 * @param ranges closed ranges lo ≤ x ≤ hi; strict bounds are turned into closed ones with the next double
 * @param categories allowed values per category column
 * @param residual what the box does not express, or null
 * @param empty whether the box can match nothing (e.g. x &gt; 3 AND x &lt; 1)
 */
public record Plan(List<Range> ranges, List<CategorySet> categories, Expr residual, boolean empty) {
  /** A closed range on a numeric column. */
  public record Range(String column, double lo, double hi) {}

  /** Allowed values of a category column. */
  public record CategorySet(String column, Set<String> values) {}

  /** Copies the lists. */
  public Plan {
    ranges = List.copyOf(ranges);
    categories = List.copyOf(categories);
  }
}
