package triage.core.region;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import triage.core.inference.CountingSignificance;
import triage.core.select.Expr;
import triage.core.select.RowTest;
import triage.core.select.ValueSource;
import triage.core.select.Where;
import triage.core.stats.NeumaierSum;

/**
 * Systematic stress of a selection's excess: the expected reference yield under each systematic's ±1σ
 * variation, the significance with the background uncertainty (MC statistics and systematics) folded in, and per
 * systematic the pull, in its own σ, that would by itself bring the expectation up to the observed count.
 *
 * <p>Conventions. Each systematic's σ is the larger of its two shifts {@code |b± − b|}; the systematics are added
 * in quadrature with the MC statistical error (uncorrelated, symmetric: common practice, no source). The pull
 * needed is {@code θ = (n − b) / (b_θ=1 − b)}, taking the side that raises the expectation and extrapolating
 * linearly beyond ±1σ; it is infinite when neither side raises it. The significance is Z_Bi with that total
 * background uncertainty (see {@link CountingSignificance#zBiFromBackground}).
 *
 * <p>An expected yield that is not positive (no reference weight selected, or negative weights that outweigh the
 * positive ones) has no significance and no pulls: a pull in units of a shift of a yield of zero or less measures
 * nothing (with b = −0.024 it gave "3930σ" and the verdict that no systematic explains the excess). Both
 * significances and every pull are then NaN, {@link Result#positiveYield()} is false, and the verdict says why.
 */
public final class Stress {
  private Stress() {
    // no instance
  }

  /**
   * One systematic's effect.
   *
   * @param name the systematic
   * @param kind {@code weights} (up/down weight columns) or {@code scale} (a feature scale shift, re-evaluated)
   * @param expectedUp the expected yield at +1σ
   * @param expectedDown at −1σ
   * @param sigma the larger shift, {@code max(|up − b|, |down − b|)}
   * @param pullToExplain the pull θ that alone would make the expectation equal the observed count (infinite when
   *     the systematic cannot raise the expectation; NaN when there is no excess)
   */
  public record Row(String name, String kind, double expectedUp, double expectedDown, double sigma,
      double pullToExplain) {}

  /**
   * The stress test of one selection.
   *
   * @param observed observed count n
   * @param expected nominal expected yield b
   * @param statError MC statistical error √Σw²
   * @param systError the systematics in quadrature
   * @param totalError both in quadrature
   * @param zStatOnly Z_Bi with the MC statistical error only
   * @param zWithSystematics Z_Bi with the total error
   * @param rows per systematic
   * @param positiveYield whether the expected yield is positive; when not, the significances and pulls are NaN
   * @param verdict one line: whether any single systematic within 2σ explains the excess, or why nothing can be said
   */
  public record Result(long observed, double expected, double statError, double systError, double totalError,
      double zStatOnly, double zWithSystematics, List<Row> rows, boolean positiveYield, String verdict) {}

  /** A systematic's ±1σ yields. */
  public record Shift(String name, String kind, double up, double down) {}

  /** Summarises an observed count against its nominal expectation and the shifted expectations. */
  public static Result summarise(long n, double b, double statError, List<Shift> shifts) {
    boolean positive = b > 0;
    List<Row> rows = new ArrayList<>();
    double syst2 = 0;
    String worst = null;
    double smallest = Double.POSITIVE_INFINITY;
    for (Shift s : shifts) {
      double sigma = Math.max(Math.abs(s.up() - b), Math.abs(s.down() - b));
      syst2 += sigma * sigma;
      double raise = Math.max(s.up() - b, s.down() - b);
      double pull = !positive || n <= b ? Double.NaN : raise > 0 ? (n - b) / raise : Double.POSITIVE_INFINITY;
      rows.add(new Row(s.name(), s.kind(), s.up(), s.down(), sigma, pull));
      if (pull < smallest) {
        smallest = pull;
        worst = s.name();
      }
    }
    double syst = Math.sqrt(syst2);
    double total = Math.hypot(statError, syst);
    double zStat = b > 0 && statError > 0 ? CountingSignificance.zBiFromBackground(n, b, statError).z() : Double.NaN;
    double zAll = b > 0 && total > 0 ? CountingSignificance.zBiFromBackground(n, b, total).z() : Double.NaN;
    String verdict;
    if (!positive) {
      verdict = String.format(java.util.Locale.ROOT, "%s (expected %.4g): no significance, and no pull can "
          + "explain an excess over it", statError > 0 ? "the selected reference weights do not sum to a positive "
          + "yield" : "no reference weight is selected", b);
    } else if (n <= b) {
      verdict = "no excess to explain";
    } else if (shifts.isEmpty()) {
      verdict = "no systematics declared: the spec's variations and scales are empty";
    } else if (smallest <= 2) {
      verdict = String.format(java.util.Locale.ROOT, "a %.1fσ pull of %s alone would explain the excess: not "
          + "robust against it", smallest, worst);
    } else {
      verdict = String.format(java.util.Locale.ROOT, "no single systematic explains it: the smallest pull needed "
          + "is %s (%s)", Double.isInfinite(smallest) ? "infinite" : String.format(java.util.Locale.ROOT, "%.1fσ",
          smallest), worst);
    }
    return new Result(n, b, statError, syst, total, zStat, zAll, rows, positive, verdict);
  }

  /**
   * The weighted yield of a condition over events held in arrays (e.g. reference events with some features
   * scaled and their scores recomputed).
   *
   * @param condition a parsed condition
   * @param kinds what each column holds
   * @param numbers numeric columns by name, one value per event
   * @param categories category columns by name
   * @param weights the events' weights
   * @return {@code {Σw, Σw²}} over the events that pass
   */
  public static double[] yield(Expr condition, Map<String, Where.Kind> kinds, Map<String, double[]> numbers,
      Map<String, String[]> categories, double[] weights) {
    List<String> slots = new ArrayList<>();
    RowTest test = Where.compile(condition, kinds, name -> {
      int i = slots.indexOf(name);
      if (i < 0) {
        slots.add(name);
        i = slots.size() - 1;
      }
      return i;
    });
    double[][] num = new double[slots.size()][];
    String[][] cat = new String[slots.size()][];
    for (int s = 0; s < slots.size(); s++) {
      num[s] = numbers.get(slots.get(s));
      cat[s] = categories.get(slots.get(s));
      if (num[s] == null && cat[s] == null) {
        throw new IllegalArgumentException("no values given for column '" + slots.get(s) + "'");
      }
    }
    int[] row = {0};
    ValueSource values = new ValueSource() {
      @Override
      public double number(int slot) {
        return num[slot][row[0]];
      }

      @Override
      public String category(int slot) {
        return cat[slot][row[0]];
      }
    };
    NeumaierSum w = new NeumaierSum();
    NeumaierSum w2 = new NeumaierSum();
    for (int i = 0; i < weights.length; i++) {
      row[0] = i;
      if (test.test(values)) {
        w.add(weights[i]);
        w2.add(weights[i] * weights[i]);
      }
    }
    return new double[] {w.value(), w2.value()};
  }

  /** The columns a condition reads. */
  public static List<String> columnsOf(Expr condition, Map<String, Where.Kind> kinds) {
    List<String> slots = new ArrayList<>();
    Where.compile(condition, kinds, name -> {
      if (!slots.contains(name)) {
        slots.add(name);
      }
      return slots.indexOf(name);
    });
    return slots;
  }
}
