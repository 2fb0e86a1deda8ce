package triage.core.inference;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.util.Arrays;
import java.util.SplittableRandom;
import org.junit.jupiter.api.Test;

class SelectionShareTest {
  /**
   * Worked example of the χ² test of homogeneity in the online tutorial "Chi-Square Test of Homogeneity" at
   * stattrek.com: two populations (100 and 200) over three levels, observed [[50, 30, 20], [50, 80, 70]], df = 2
   * and χ² = 19.39 computed there with expected counts rounded to one decimal (quoted). Unrounded, SciPy 1.17.1
   * chi2_contingency gives 19.318181818181817 and p = 6.384253422581756e-05 (computed).
   */
  @Test
  void theTutorialsWorkedExample() {
    // Categories are the three levels; "selected" is the first population.
    SelectionShare s = SelectionShare.of(new long[] {50, 30, 20}, new long[] {100, 110, 90});
    assertEquals(2, s.dof());
    assertEquals(19.39, s.pearson(), 0.1);
    assertEquals(19.318181818181817, s.pearson(), 1e-12);
    assertEquals(6.384253422581756e-05, s.pearsonP(), 1e-15);
  }

  @Test
  void pearsonAndGAgreeWithScipyOnRandomTables() throws IOException {
    int rows = 0;
    try (BufferedReader r = new BufferedReader(new InputStreamReader(SelectionShareTest.class.getResourceAsStream(
        "contingency-homogeneity.csv"), StandardCharsets.UTF_8))) {
      String line;
      while ((line = r.readLine()) != null) {
        if (line.startsWith("#") || line.startsWith("selected")) {
          continue;
        }
        String[] f = line.split(",");
        long[] sel = Arrays.stream(f[0].split(";")).mapToLong(Long::parseLong).toArray();
        long[] not = Arrays.stream(f[1].split(";")).mapToLong(Long::parseLong).toArray();
        long[] total = new long[sel.length];
        for (int i = 0; i < sel.length; i++) {
          total[i] = sel[i] + not[i];
        }
        SelectionShare s = SelectionShare.of(sel, total);
        assertEquals(Double.parseDouble(f[2]), s.pearson(), 1e-10 * Double.parseDouble(f[2]), line);
        assertEquals(Integer.parseInt(f[3]), s.dof());
        assertEquals(Double.parseDouble(f[4]), s.pearsonP(), 1e-10, line);
        assertEquals(Double.parseDouble(f[5]), s.g(), 1e-10 * Double.parseDouble(f[5]), line);
        assertEquals(Double.parseDouble(f[6]), s.gP(), 1e-10, line);
        rows++;
      }
    }
    assertEquals(10, rows);
  }

  @Test
  void inATwoByTwoTableThePullSquaredIsPearsonsChiSquared() {
    // Analytic identity of the adjusted residual.
    SelectionShare s = SelectionShare.of(new long[] {17, 40}, new long[] {60, 300});
    assertEquals(s.pearson(), s.pulls()[0] * s.pulls()[0], 1e-10);
    assertEquals(-s.pulls()[0], s.pulls()[1], 1e-10);
  }

  @Test
  void emptyCategoriesAreLeftOutAndDegenerateTablesGiveNaN() {
    SelectionShare s = SelectionShare.of(new long[] {50, 0, 30, 20}, new long[] {100, 0, 110, 90});
    assertEquals(2, s.dof());
    assertEquals(19.318181818181817, s.pearson(), 1e-12);
    assertTrue(Double.isNaN(s.pulls()[1]));
    assertTrue(Double.isNaN(SelectionShare.of(new long[] {0, 0}, new long[] {5, 6}).pearson()));
    assertTrue(Double.isNaN(SelectionShare.of(new long[] {3}, new long[] {5}).pearson()));
    assertThrows(InferenceArgumentException.class, () -> SelectionShare.of(new long[] {6}, new long[] {5}));
  }

  /**
   * Under homogeneity the p-values are uniform: 2000 tables of 12 categories (200 to 600 events, share 0.2),
   * seeds fixed; the KS distance of the Pearson p-values to the uniform must be below 0.04 (the 1% critical value
   * for n = 2000 is 1.63/√n = 0.036; the χ² approximation adds a little).
   */
  @Test
  void pValuesAreUniformWithoutAConcentration() {
    int n = 2000;
    double[] p = new double[n];
    SplittableRandom r = new SplittableRandom(77);
    for (int d = 0; d < n; d++) {
      long[] total = new long[12];
      long[] sel = new long[12];
      for (int k = 0; k < 12; k++) {
        total[k] = 200 + r.nextInt(401);
        for (long i = 0; i < total[k]; i++) {
          sel[k] += r.nextDouble() < 0.2 ? 1 : 0;
        }
      }
      p[d] = SelectionShare.of(sel, total).pearsonP();
    }
    Arrays.sort(p);
    double ks = 0;
    for (int i = 0; i < n; i++) {
      ks = Math.max(ks, Math.max(Math.abs(p[i] - (double) i / n), Math.abs(p[i] - (i + 1.0) / n)));
    }
    assertTrue(ks < 0.04, "KS distance to uniform " + ks);
  }

  @Test
  void theMonteCarloPAgreesWithTheAsymptoticOneOnAWellFilledTable() {
    long[] sel = {50, 30, 20};
    long[] total = {100, 110, 90};
    double mc = SelectionShare.monteCarloP(sel, total, 20_000, 5);
    // p = 6.4e-5: with 20,000 tables, about 1.3 expected exceedances; the estimator's floor is 1/20001.
    assertTrue(mc < 5e-4, "mc " + mc);
    long[] sel2 = {16, 24, 23, 41, 15};
    long[] total2 = {239, 296, 243, 348, 155};
    double asym = SelectionShare.of(sel2, total2).pearsonP();
    double mc2 = SelectionShare.monteCarloP(sel2, total2, 20_000, 6);
    // scipy fixture row: p = 0.287; binomial standard error of the MC estimate is 0.0032.
    assertEquals(asym, mc2, 0.02);
    assertEquals(SelectionShare.monteCarloP(sel2, total2, 500, 9), SelectionShare.monteCarloP(sel2, total2, 500, 9));
  }

  /**
   * On sparse tables (40 categories of about 30 events, share 2%: fewer selected events than categories) the
   * Monte Carlo p-values are valid: at α = 0.05 and 0.2 the rejection rate over 300 null tables (seeds fixed) does
   * not exceed α by more than 2.5 binomial standard deviations.
   */
  @Test
  void theMonteCarloPIsValidOnSparseTables() {
    int datasets = 300;
    int at05 = 0;
    int at20 = 0;
    SplittableRandom r = new SplittableRandom(2024);
    for (int d = 0; d < datasets; d++) {
      long[] total = new long[40];
      long[] sel = new long[40];
      for (int k = 0; k < 40; k++) {
        total[k] = 20 + r.nextInt(21);
        for (long i = 0; i < total[k]; i++) {
          sel[k] += r.nextDouble() < 0.02 ? 1 : 0;
        }
      }
      double p = SelectionShare.monteCarloP(sel, total, 199, d);
      at05 += p <= 0.05 ? 1 : 0;
      at20 += p <= 0.2 ? 1 : 0;
    }
    assertTrue(at05 / (double) datasets <= 0.05 + 2.5 * Math.sqrt(0.05 * 0.95 / datasets), "rate " + at05);
    assertTrue(at20 / (double) datasets <= 0.2 + 2.5 * Math.sqrt(0.2 * 0.8 / datasets), "rate " + at20);
    assertTrue(at20 / (double) datasets >= 0.2 - 4 * Math.sqrt(0.2 * 0.8 / datasets), "not far too conservative");
  }
}
