package triage.core.ranking;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static triage.core.ranking.Tolerance.assertRelative;

import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

class BinnedJensenShannonTest {
  private static final BinnedJensenShannon JS = BinnedJensenShannon.withDefaults();

  @Test
  void handComputed() {
    // disjoint: JSD = ln 2 nats = 1 bit (definition); tolerance 1e-15 relative
    assertRelative(Math.log(2), BinnedJensenShannon.divergence(new double[] {1, 0}, new double[] {0, 1},
      BinnedJensenShannon.LogBase.NATURAL), 1e-15, "disjoint nats");
    assertRelative(1.0, BinnedJensenShannon.divergence(new double[] {1, 0}, new double[] {0, 1},
      BinnedJensenShannon.LogBase.BITS), 1e-15, "disjoint bits");
    // p = (1/2, 1/2), q = (1, 0), m = (3/4, 1/4): KL(p||m) = (1/2) ln(4/3), KL(q||m) = ln(4/3),
    // JSD = (3/4) ln(4/3) (hand computation); tolerance 1e-15 relative
    assertRelative(0.75 * Math.log(4.0 / 3), BinnedJensenShannon.divergence(new double[] {5, 5},
      new double[] {7, 0}, BinnedJensenShannon.LogBase.NATURAL), 1e-15, "hand");
    // nearly identical histograms: p = (1/2 + e, 1/2 - e), q = (1/2, 1/2): JSD = e^2/2 + O(e^4) (Taylor
    // expansion of the definition); e = 1e-6, tolerance 1e-9 relative
    final double e = 1e-6;
    assertRelative(e * e / 2, BinnedJensenShannon.divergence(new double[] {0.5 + e, 0.5 - e},
      new double[] {0.5, 0.5}, BinnedJensenShannon.LogBase.NATURAL), 1e-9, "near identical");
    assertEquals(0.0, BinnedJensenShannon.divergence(new double[] {1, 2, 3}, new double[] {2, 4, 6},
      BinnedJensenShannon.LogBase.NATURAL), 0.0);
  }

  @Test
  void seriesMatchesDirectForm() {
    // g(d) by series (|d| < 0.1) and by logs agree at the switch; tolerance 1e-14 relative
    final double d = 0.1;
    final double direct = (1 + d) * Math.log1p(d) + (1 - d) * Math.log1p(-d);
    assertRelative(direct, BinnedJensenShannon.g(Math.nextDown(d)), 1e-14, "g at switch");
    assertEquals(2 * Math.log(2), BinnedJensenShannon.g(1), 1e-15);
  }

  static Stream<Cases.Case> fixture() {
    return Cases.all().stream();
  }

  @ParameterizedTest
  @MethodSource
  void fixture(Cases.Case c) {
    // two-sample-cases.txt [C]: scipy.spatial.distance.jensenshannon(p, q)**2 (it returns the square root of
    // the divergence) on numpy.histogram contents with 5 equal-width bins over the reference range; drop mode
    // in nats and bits, and with underflow/overflow bins. Tolerance 1e-12 relative.
    final BinnedJensenShannon js = JS.with(Binning.edges(c.get("jsd_edges")));
    final double[] x = c.get("x");
    final double[] wx = c.get("wx");
    final double[] y = c.get("y");
    final double[] wy = c.get("wy");
    assertRelative(c.scalar("jsd_drop_nat"), js.with(BinnedJensenShannon.OutOfRange.DROP).statistic(x, wx, y, wy),
      1e-12, "drop nats " + c);
    assertRelative(c.scalar("jsd_drop_bit"), js.with(BinnedJensenShannon.OutOfRange.DROP)
      .with(BinnedJensenShannon.LogBase.BITS).statistic(x, wx, y, wy), 1e-12, "drop bits " + c);
    assertRelative(c.scalar("jsd_extra_nat"), js.statistic(x, wx, y, wy), 1e-12, "extra bins " + c);
  }

  @Test
  void referenceQuantileEdges() {
    // reference 1..100, 4 bins: quantile at k/4 is the smallest value with cumulative fraction >= k/4:
    // 25, 50, 75 (hand computation), ends at min and max
    final double[] y = new double[100];
    for (int i = 0; i < 100; i++) {
      y[i] = 100 - i;
    }
    assertArrayEquals(new double[] {1, 25, 50, 75, 100},
      JS.with(Binning.referenceQuantiles(4)).edges(y, null), 0.0);
    // weighted: values (1, 2, 3, 4) with weights (3, 1, 1, 3), 2 bins: cumulative (3, 4, 5, 8)/8, median
    // edge at 2 (first with fraction >= 1/2)
    assertArrayEquals(new double[] {1, 2, 4}, JS.with(Binning.referenceQuantiles(2))
      .edges(new double[] {4, 3, 2, 1}, new double[] {3, 1, 1, 3}), 0.0);
    // ties merge edges; a constant reference gives one closed bin [v, v]
    assertArrayEquals(new double[] {5, 5}, JS.with(Binning.referenceQuantiles(3)).edges(new double[] {5, 5, 5},
      null), 0.0);
    assertEquals(0.0, JS.statistic(new double[] {5, 5}, new double[] {5, 5, 5}), 0.0);
    // default 20 quantile bins: identical samples give 0, disjoint samples ln 2
    assertEquals(0.0, JS.statistic(y, y), 0.0);
    final double[] far = new double[50];
    java.util.Arrays.fill(far, 1000);
    assertRelative(Math.log(2), JS.statistic(far, y), 1e-15, "disjoint via overflow bin");
  }

  @Test
  void binIndexConvention() {
    final double[] e = {0, 1, 2};
    assertEquals(0, BinnedJensenShannon.binIndex(-0.1, e));
    assertEquals(1, BinnedJensenShannon.binIndex(0, e));
    assertEquals(2, BinnedJensenShannon.binIndex(1, e));
    assertEquals(2, BinnedJensenShannon.binIndex(2, e));
    assertEquals(3, BinnedJensenShannon.binIndex(2.5, e));
  }

  @Test
  void edgeCases() {
    assertThrows(RankingArgumentException.class, () -> Binning.edges(1, 1));
    assertThrows(RankingArgumentException.class, () -> Binning.edges(1));
    assertThrows(RankingArgumentException.class, () -> Binning.referenceQuantiles(0));
    assertThrows(RankingArgumentException.class, () -> JS.with(Binning.edges(0, 1))
      .with(BinnedJensenShannon.OutOfRange.DROP).statistic(new double[] {5}, new double[] {0.5}));
    // negative bin content throws even when negative weights are allowed
    assertThrows(RankingArgumentException.class, () -> JS.with(NegativeWeights.ALLOW).with(Binning.edges(0, 1, 2))
      .statistic(new double[] {0.5}, null, new double[] {0.5, 1.5, 1.6}, new double[] {-1, 2, 1}));
    assertThrows(RankingArgumentException.class, () -> BinnedJensenShannon.divergence(new double[] {1},
      new double[] {1, 2}, BinnedJensenShannon.LogBase.NATURAL));
  }
}
