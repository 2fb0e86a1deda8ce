package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.ranking.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.Arguments;
import org.junit.jupiter.params.provider.MethodSource;

class WeightedRocAucTest {
  private static final WeightedRocAuc AUC = WeightedRocAuc.withDefaults();

  // CHECK-VALUES.md §9 AUC table.
  static Stream<Arguments> checkValues() {
    return Stream.of(
      // [Q] scikit-learn 0.13 auc_score docstring: positives {0.35, 0.8} vs negatives {0.1, 0.4} -> 0.75
      Arguments.of(new double[] {0.35, 0.8}, new double[] {0.1, 0.4}, 0.75),
      // [Q] scipy mannwhitneyu docstring (its example from the 2004 handout "Statistics: 2.3 The Mann-Whitney U
      // Test"): U1 = 17 of 5 x 4 -> 0.85
      Arguments.of(new double[] {19, 22, 16, 29, 24}, new double[] {20, 11, 17, 12}, 0.85),
      // [C] one tie: U = 3.5 -> 0.875
      Arguments.of(new double[] {0.5, 0.8}, new double[] {0.5, 0.2}, 0.875),
      // [C] [1,2,3] vs [4,5,6]: U = 0
      Arguments.of(new double[] {1, 2, 3}, new double[] {4, 5, 6}, 0.0));
  }

  @ParameterizedTest
  @MethodSource
  void checkValues(double[] x, double[] y, double auc) {
    // tolerance: 1e-15 relative (exact rationals)
    assertRelative(auc, AUC.statistic(x, y), 1e-15, "AUC");
    // U1 + U2 = n1 n2 (CHECK-VALUES.md §9): AUC(x, y) + AUC(y, x) = 1
    assertEquals(1.0, AUC.statistic(x, y) + AUC.statistic(y, x), 1e-15);
  }

  @Test
  void shierU() {
    // [Q] scipy docstring: "print(U1) 17.0", U2 = 3 for males vs females
    final double[] males = {19, 22, 16, 29, 24};
    final double[] females = {20, 11, 17, 12};
    assertEquals(17.0, AUC.statistic(males, females) * 20, 1e-13);
    assertEquals(3.0, AUC.statistic(females, males) * 20, 1e-13);
    assertEquals(0.35, AUC.separation(males, null, females, null), 1e-15);
  }

  static Stream<Cases.Case> fixture() {
    return Cases.all().stream();
  }

  @ParameterizedTest
  @MethodSource
  void fixture(Cases.Case c) {
    // two-sample-cases.txt [C]: numpy brute-force weighted double sum; scipy mannwhitneyu U/(nm) for the
    // unweighted cases. Tolerance 1e-13 relative.
    final double auc = AUC.statistic(c.get("x"), c.get("wx"), c.get("y"), c.get("wy"));
    assertRelative(c.scalar("auc"), auc, 1e-13, "AUC " + c);
    if (c.has("auc_mwu")) {
      assertRelative(c.scalar("auc_mwu"), auc, 1e-13, "MWU " + c);
    }
  }

  /**
   * auc-sklearn.txt [C]: scikit-learn 1.2.1 (Debian 12's python3-sklearn) roc_auc_score with sample weights, the
   * observed sample labelled 1, on the cases of two-sample-cases.txt (generate_auc_sklearn.py). 1e-12 relative.
   */
  @Test
  void weightedAucAgreesWithScikitLearn() throws java.io.IOException {
    java.util.Map<String, Cases.Case> byName = new java.util.HashMap<>();
    Cases.all().forEach(c -> byName.put(c.name(), c));
    int checked = 0;
    try (java.io.BufferedReader r = new java.io.BufferedReader(new java.io.InputStreamReader(
        WeightedRocAucTest.class.getResourceAsStream("auc-sklearn.txt"), java.nio.charset.StandardCharsets.UTF_8))) {
      for (String line = r.readLine(); line != null; line = r.readLine()) {
        if (line.startsWith("#") || line.isBlank()) {
          continue;
        }
        String[] f = line.trim().split("\\s+");
        Cases.Case c = byName.get(f[0]);
        assertRelative(Double.parseDouble(f[1]), AUC.statistic(c.get("x"), c.get("wx"), c.get("y"), c.get("wy")),
            1e-12, "scikit-learn AUC " + f[0]);
        checked++;
      }
    }
    assertEquals(6, checked);
  }

  @Test
  void edgeCases() {
    final double[] x = {1, 2, 3};
    assertEquals(0.5, AUC.statistic(x, x), 0.0);
    assertThrows(RankingArgumentException.class, () -> AUC.statistic(x, null, x, new double[] {1, -1, 1}));
    // ALLOW: reference weights (1, -1, 1) at (1, 2, 3), total 1; x = {2}: P(2 > y) = 1, P(2 = y) = -1:
    // AUC = (1 + (-1)/2)/1 = 0.5 (hand computation)
    assertEquals(0.5, AUC.with(NegativeWeights.ALLOW).statistic(new double[] {2}, null, x,
      new double[] {1, -1, 1}), 1e-15);
    assertThrows(RankingArgumentException.class, () -> AUC.statistic(x, new double[] {1, 1}, x, null));
    assertThrows(RankingArgumentException.class, () -> AUC.with(null));
  }
}
