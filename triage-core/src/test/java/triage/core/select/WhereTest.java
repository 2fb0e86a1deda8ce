package triage.core.select;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.function.Predicate;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

/** Parsing, positioned errors, box extraction, and evaluation against hand-written Java predicates. */
class WhereTest {
  static final Map<String, Where.Kind> COLUMNS = Map.of("m", Where.Kind.NUMBER, "pt", Where.Kind.NUMBER,
      "run", Where.Kind.NUMBER, "score:m1", Where.Kind.NUMBER, "sector", Where.Kind.CATEGORY);

  static final List<String> SLOTS = List.of("m", "pt", "run", "score:m1", "sector");

  /** One random event. */
  record Event(double m, double pt, double run, double score, String sector) implements ValueSource {
    @Override
    public double number(int slot) {
      return switch (slot) {
        case 0 -> m;
        case 1 -> pt;
        case 2 -> run;
        case 3 -> score;
        default -> throw new IllegalArgumentException();
      };
    }

    @Override
    public String category(int slot) {
      return sector;
    }
  }

  /** Conditions and the same condition written in Java (the reference). */
  static Stream<Arguments> conditions() {
    return Stream.of(
        Arguments.of("m > 700", (Predicate<Event>) e -> e.m() > 700),
        Arguments.of("m BETWEEN 650 AND 800 AND pt >= 100", (Predicate<Event>) e -> e.m() >= 650 && e.m() <= 800
            && e.pt() >= 100),
        Arguments.of("NOT (m < 700 OR pt <= 50)", (Predicate<Event>) e -> !(e.m() < 700 || e.pt() <= 50)),
        Arguments.of("sector IN ('10', '11') and run <> 4117", (Predicate<Event>) e -> (e.sector().equals("10")
            || e.sector().equals("11")) && e.run() != 4117),
        Arguments.of("abs(pt - m / 2) < 30 OR score:m1 > 2.5", (Predicate<Event>) e -> Math.abs(e.pt() - e.m() / 2) < 30
            || e.score() > 2.5),
        Arguments.of("sector <> '11' AND run NOT IN (4117, 4118)", (Predicate<Event>) e -> !e.sector().equals("11")
            && e.run() != 4117 && e.run() != 4118),
        Arguments.of("max(m, 2 * pt) >= 800 AND log(pt) > 4 AND sqrt(m) < 30", (Predicate<Event>) e ->
            Math.max(e.m(), 2 * e.pt()) >= 800 && Math.log(e.pt()) > 4 && Math.sqrt(e.m()) < 30),
        Arguments.of("m NOT BETWEEN 600 AND 900", (Predicate<Event>) e -> !(e.m() >= 600 && e.m() <= 900)),
        Arguments.of("-m < -700 AND 700 < m + 1e1", (Predicate<Event>) e -> -e.m() < -700 && 700 < e.m() + 10),
        Arguments.of("m > 700 AND m < 600", (Predicate<Event>) e -> false),
        Arguments.of("sector = '11' AND sector = '10'", (Predicate<Event>) e -> false),
        // SQL: a divisor that is 0 for an event gives NULL, so the comparison does not select it (pt − pt is 0 for
        // every event: before, m / 0 = +∞ selected them all); elsewhere the division is the plain one
        Arguments.of("m / (pt - pt) > 1", (Predicate<Event>) e -> false),
        Arguments.of("m / (run - 4117) > 200", (Predicate<Event>) e -> e.run() != 4117 && e.m() / (e.run() - 4117)
            > 200));
  }

  /**
   * Randomised against the Java predicate (seed 5, 2000 events each), both for the compiled condition and for the
   * plan (box ranges and sets, plus the compiled residual), which must be exactly equivalent.
   */
  @ParameterizedTest(name = "{0}")
  @MethodSource("conditions")
  void conditions(String text, Predicate<Event> reference) {
    Expr e = Where.parse(text, COLUMNS);
    RowTest test = Where.compile(e, COLUMNS, SLOTS::indexOf);
    Plan plan = Where.plan(e, COLUMNS);
    RowTest residual = plan.residual() == null ? v -> true : Where.compile(plan.residual(), COLUMNS, SLOTS::indexOf);
    SplittableRandom r = new SplittableRandom(5);
    for (int i = 0; i < 2000; i++) {
      Event ev = new Event(500 + 500 * r.nextDouble(), 20 + 400 * r.nextDouble(), 4115 + r.nextInt(5),
          5 * r.nextDouble(), String.valueOf(8 + r.nextInt(5)));
      boolean want = reference.test(ev);
      assertEquals(want, test.test(ev), text + " on " + ev);
      boolean inBox = !plan.empty() && plan.ranges().stream().allMatch(g -> {
        double x = ev.number(SLOTS.indexOf(g.column()));
        return x >= g.lo() && x <= g.hi();
      }) && plan.categories().stream().allMatch(c -> c.values().contains(ev.sector()));
      assertEquals(want, inBox && residual.test(ev), "plan of " + text + " on " + ev);
    }
  }

  @Test
  void boxExtractionTakesSimpleConjuncts() {
    Plan p = Where.plan(Where.parse("m > 700 AND m <= 800 AND 100 < pt AND sector IN ('1','2') AND abs(pt) < 9",
        COLUMNS), COLUMNS);
    assertEquals(2, p.ranges().size());
    assertEquals(new Plan.Range("m", Math.nextUp(700.0), 800), p.ranges().get(0));
    assertEquals(new Plan.Range("pt", Math.nextUp(100.0), Double.POSITIVE_INFINITY), p.ranges().get(1));
    assertEquals(Set.of("1", "2"), p.categories().get(0).values());
    assertTrue(p.residual() instanceof Expr.Compare);
    assertNull(Where.plan(Where.parse("m = 3", COLUMNS), COLUMNS).residual());
  }

  private static WhereException fails(String text) {
    return assertThrows(WhereException.class, () -> Where.parse(text, COLUMNS));
  }

  /** Conditions too long or too deep for the recursive parser are refused with their place, not a crash. */
  @Test
  void hugeConditionsAreRefusedWithTheirPlace() {
    StringBuilder ors = new StringBuilder("m > 0");
    for (int i = 1; i <= 3000; i++) {
      ors.append(" OR m > ").append(i);
    }
    WhereException e = fails(ors.toString());
    assertTrue(e.getMessage().contains("more than 1000 operators"), e.getMessage());
    assertEquals(ors.indexOf(" OR m > 1001") + 1, e.position());
    String deep = "(".repeat(3000) + "m > 1" + ")".repeat(3000);
    assertTrue(fails(deep).getMessage().contains("nested more than 100 deep"));
    assertTrue(fails("NOT ".repeat(5000) + "m > 1").getMessage().contains("more than 1000 operators"));
    // 999 ORs, and a long IN list, are fine
    StringBuilder fine = new StringBuilder("m > 0");
    for (int i = 1; i < 1000; i++) {
      fine.append(" OR m > ").append(i);
    }
    Where.parse(fine.toString(), COLUMNS);
    StringBuilder in = new StringBuilder("m IN (0");
    for (int i = 1; i < 20_000; i++) {
      in.append(", ").append(i);
    }
    Where.parse(in.append(")").toString(), COLUMNS);
    StringBuilder negative = new StringBuilder("m IN (-1");
    for (int i = 2; i <= 1200; i++) {
      negative.append(", -").append(i);
    }
    Where.parse(negative.append(")").toString(), COLUMNS);
  }

  @Test
  void categoryValuesNamedAnywhereAreListed() {
    Expr e = Where.parse("(sector = '11' OR NOT '9' <> sector) AND sector NOT IN ('12', '11') AND m > 1",
        COLUMNS);
    assertEquals(Map.of("sector", Set.of("11", "9", "12")), Where.categoryValues(e, COLUMNS));
    assertEquals(List.of("11", "9", "12"), List.copyOf(Where.categoryValues(e, COLUMNS).get("sector")));
    assertTrue(Where.categoryValues(Where.parse("m > 1", COLUMNS), COLUMNS).isEmpty());
  }

  @Test
  void errorsPointAtThePlace() {
    WhereException e = fails("m > 700 AND mass < 3");
    assertEquals(12, e.position());
    assertTrue(e.getMessage().contains("unknown column 'mass'"), e.getMessage());
    assertTrue(e.getMessage().endsWith("\n  m > 700 AND mass < 3\n              ^"), e.getMessage());
    assertEquals(8, fails("m > 700 pt < 3").position());
    assertTrue(fails("m > 700 pt < 3").getMessage().contains("expected AND, OR or the end, found 'pt'"));
    assertEquals(12, fails("m BETWEEN 1 OR 2").position());
    assertTrue(fails("(m > 1").getMessage().contains("expected ')', found the end"));
    assertTrue(fails("sector = 11").getMessage().contains("quoted text"));
    assertTrue(fails("m = 'a'").getMessage().contains("not with text"));
    assertTrue(fails("sector > '1'").getMessage().contains("= or <> only"));
    assertTrue(fails("m + 1").getMessage().contains("found a value"));
    assertTrue(fails("m > 1 AND pt").getMessage().contains("AND needs a condition"));
    assertTrue(fails("frob(m) > 1").getMessage().contains("unknown function 'frob'"));
    assertTrue(fails("abs(m, pt) > 1").getMessage().contains("abs takes one argument"));
    assertTrue(fails("sector = 'open").getMessage().contains("not closed"));
    assertTrue(fails("m > 7x").getMessage().contains("runs into a name"));
    assertTrue(fails("m > 1 & pt > 2").getMessage().contains("unexpected character '&'"));
    assertTrue(fails("   ").getMessage().contains("empty selection"));
    // SQL: a divisor that is zero when the condition is parsed is an error, at the divisor
    WhereException zero = fails("m / 0 > 1");
    assertEquals(4, zero.position());
    assertTrue(zero.getMessage().contains("division by zero"), zero.getMessage());
    assertEquals(11, fails("m > 1 / (2 - 2)").position()); // at the divisor's operator
    assertEquals(4, fails("m / -0.0 > 1").position());
  }
}
