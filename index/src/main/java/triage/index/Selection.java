package triage.index;

import java.util.ArrayList;
import java.util.List;
import java.util.Set;
import triage.core.select.Expr;

/**
 * A box selection: every range and every category condition must hold, and the event must belong to one of the
 * named samples (all samples when none are named).
 *
 * @param ranges closed ranges lo ≤ x ≤ hi on numeric columns (use ±infinity for one-sided cuts; model scores
 *     are selected as columns named {@code score:VERSION})
 * @param categories allowed values of category columns
 * @param samples the samples to include, or empty for all
 * @param residual a further condition tested on each event in the box (from {@link EventStore#where}), or null
 */
public record Selection(List<Range> ranges, List<CategoryIn> categories, Set<String> samples, Expr residual) {

  /**
   * A closed range on a numeric column.
   *
   * @param column the column
   * @param lo the lowest value kept
   * @param hi the highest value kept
   */
  public record Range(String column, double lo, double hi) {
    /** Checks the bounds: not NaN, lo ≤ hi. */
    public Range {
      if (Double.isNaN(lo) || Double.isNaN(hi)) {
        throw new IllegalArgumentException("range on '" + column + "' has a NaN bound");
      }
      if (lo > hi) {
        throw new IllegalArgumentException("range on '" + column + "' is empty: lo " + lo + " > hi " + hi);
      }
    }

    /** Whether the value lies in the range. */
    public boolean contains(double x) {
      return x >= lo && x <= hi;
    }
  }

  /**
   * A set of allowed values of a category column.
   *
   * @param column the column
   * @param values the values kept
   */
  public record CategoryIn(String column, Set<String> values) {
    /** Copies the values. */
    public CategoryIn {
      values = Set.copyOf(values);
    }
  }

  /** A box without residual. */
  public Selection(List<Range> ranges, List<CategoryIn> categories, Set<String> samples) {
    this(ranges, categories, samples, null);
  }

  /** Copies the lists. */
  public Selection {
    ranges = List.copyOf(ranges);
    categories = List.copyOf(categories);
    samples = Set.copyOf(samples);
  }

  /** Every event of every sample. */
  public static Selection all() {
    return new Selection(List.of(), List.of(), Set.of());
  }

  /** The same selection with one more range. */
  public Selection and(Range range) {
    List<Range> more = new ArrayList<>(ranges);
    more.add(range);
    return new Selection(more, categories, samples, residual);
  }

  /** The same selection with one more category condition. */
  public Selection and(CategoryIn condition) {
    List<CategoryIn> more = new ArrayList<>(categories);
    more.add(condition);
    return new Selection(ranges, more, samples, residual);
  }

  /** The same selection restricted to some samples. */
  public Selection inSamples(Set<String> names) {
    return new Selection(ranges, categories, names, residual);
  }
}
