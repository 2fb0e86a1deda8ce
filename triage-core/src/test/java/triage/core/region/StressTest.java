package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import triage.core.inference.CountingSignificance;
import triage.core.select.Where;

/** Systematic stress: hand-computed pulls and sums, and selections re-evaluated on scaled values. */
class StressTest {
  @Test
  void pullsAndQuadratureByHand() {
    // n = 20 over b = 10 ± 1 (stat.). A: 11 / 9, σ 1, raises by 1 → pull (20 − 10)/1 = 10.
    // B: 9.5 / 12, σ 2, raises by 2 on the down side → pull 5. C lowers on both sides → cannot.
    Stress.Result r = Stress.summarise(20, 10, 1, List.of(new Stress.Shift("A", "weights", 11, 9),
        new Stress.Shift("B", "scale", 9.5, 12), new Stress.Shift("C", "weights", 9.8, 9.9)));
    assertEquals(10, r.rows().get(0).pullToExplain(), 1e-12);
    assertEquals(5, r.rows().get(1).pullToExplain(), 1e-12);
    assertTrue(Double.isInfinite(r.rows().get(2).pullToExplain()));
    assertEquals(Math.sqrt(1 + 4 + 0.04), r.systError(), 1e-12);
    assertEquals(Math.sqrt(1 + 1 + 4 + 0.04), r.totalError(), 1e-12);
    assertEquals(CountingSignificance.zBiFromBackground(20, 10, r.totalError()).z(), r.zWithSystematics(), 1e-12);
    assertTrue(r.zWithSystematics() < r.zStatOnly(), "folding in systematics lowers Z");
    assertTrue(r.verdict().contains("5.0σ (B)"), r.verdict());
  }

  @Test
  void aSmallPullSaysTheExcessIsNotRobust() {
    Stress.Result r = Stress.summarise(12, 10, 0.5, List.of(new Stress.Shift("scale", "scale", 11.5, 8.5)));
    assertEquals(2.0 / 1.5, r.rows().get(0).pullToExplain(), 1e-12);
    assertTrue(r.verdict().startsWith("a 1.3σ pull of scale alone"), r.verdict());
    assertEquals("no excess to explain", Stress.summarise(8, 10, 0.5, List.of()).verdict());
  }

  @Test
  void aYieldThatIsNotPositiveGetsNoSignificanceNoPullsAndNoVerdictOnTheSystematics() {
    // The review's case: n = 1 over b = −0.02355 ± 0.02355 (one reference event of negative weight); before, the
    // pulls were (1 + 0.02355)/0.00026 = 3930σ and "no single systematic explains it". A pull in units of a shift of
    // a non-positive yield measures nothing, as select gives no significance there.
    Stress.Result r = Stress.summarise(1, -0.02355, 0.02355, List.of(new Stress.Shift("gain", "weights", -0.02329,
        -0.02381), new Stress.Shift("eff", "weights", -0.02472, -0.02260)));
    assertFalse(r.positiveYield());
    assertTrue(Double.isNaN(r.zStatOnly()) && Double.isNaN(r.zWithSystematics()), r.toString());
    for (Stress.Row row : r.rows()) {
      assertTrue(Double.isNaN(row.pullToExplain()), row.toString());
    }
    assertTrue(r.verdict().startsWith("the selected reference weights do not sum to a positive yield"), r.verdict());
    assertFalse(r.verdict().contains("systematic explains"), r.verdict());
    Stress.Result none = Stress.summarise(3, 0, 0, List.of(new Stress.Shift("s", "scale", 0.5, 0)));
    assertFalse(none.positiveYield());
    assertTrue(Double.isNaN(none.rows().get(0).pullToExplain()));
    assertTrue(none.verdict().startsWith("no reference weight is selected"), none.verdict());
    assertTrue(Stress.summarise(3, 1, 0.1, List.of()).positiveYield());
  }

  @Test
  void scaledValuesAreSelectedAgain() {
    // x = 1..100, weight 1 (and 2 for even x): x > 50 keeps 51..100; scaled by 1.1 it keeps x > 45.45…, i.e.
    // 46..100 (analytic).
    double[] x = new double[100];
    double[] w = new double[100];
    for (int i = 0; i < 100; i++) {
      x[i] = i + 1;
      w[i] = (i + 1) % 2 == 0 ? 2 : 1;
    }
    Map<String, Where.Kind> kinds = Map.of("x", Where.Kind.NUMBER);
    var condition = Where.parse("x > 50", kinds);
    double[] scaled = x.clone();
    for (int i = 0; i < 100; i++) {
      scaled[i] *= 1.1;
    }
    // 51..100: 25 odd (w 1) + 25 even (w 2) = 75, Σw² = 25 + 100 = 125.
    assertArrayEquals(new double[] {75, 125}, Stress.yield(condition, kinds, Map.of("x", x), Map.of(), w), 0);
    // 46..100: 27 odd + 28 even → 27 + 56 = 83, Σw² = 27 + 112 = 139.
    assertArrayEquals(new double[] {83, 139}, Stress.yield(condition, kinds, Map.of("x", scaled), Map.of(), w), 0);
    assertEquals(List.of("x"), Stress.columnsOf(condition, kinds));
  }
}
