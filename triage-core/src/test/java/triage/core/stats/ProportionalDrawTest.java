package triage.core.stats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.rng.UniformRandomProvider;
import org.apache.commons.rng.simple.RandomSource;
import org.junit.jupiter.api.Test;

/**
 * Randomised systematic πps sampling: every draw has exactly n distinct items, and item i is drawn with the analytic
 * probability n s_i / Σ s (Hartley–Rao, Ann. Math. Statist. 33 (1962) 350, §2), checked by frequency over many
 * seeded draws.
 */
class ProportionalDrawTest {
  @Test
  void inclusionFrequenciesMatchTheSizeShares() {
    // sizes 1..40 with two of size zero; n = 10 of 40: π_i = 10 s_i / Σ s, all below one
    double[] s = new double[40];
    for (int i = 0; i < s.length; i++) {
      s[i] = i % 13 == 5 ? 0 : 1 + i;
    }
    double total = 0;
    for (double x : s) {
      total += x;
    }
    int n = 10;
    ProportionalDraw plan = ProportionalDraw.plan(s, n);
    int draws = 40_000;
    long[] count = new long[s.length];
    UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(17);
    int[] order = new int[s.length];
    int[] out = new int[n];
    double htMean = 0;
    for (int b = 0; b < draws; b++) {
      plan.draw(rng, order, out);
      boolean[] seen = new boolean[s.length];
      for (int i : out) {
        assertTrue(!seen[i], "item drawn twice");
        seen[i] = true;
        count[i]++;
      }
      // Horvitz–Thompson: the items left out, weighted w/(1 − π), estimate Σ w (here w = s) without bias.
      double ht = 0;
      for (int i = 0; i < s.length; i++) {
        if (!seen[i]) {
          ht += plan.horvitzThompson(i, s[i]);
        }
      }
      htMean += ht / draws;
    }
    for (int i = 0; i < s.length; i++) {
      double pi = n * s[i] / total;
      assertEquals(pi, plan.inclusion(i), 1e-15);
      // binomial standard error of a frequency; 5σ over 40 items keeps a false alarm below 1e-4
      double se = Math.sqrt(pi * (1 - pi) / draws);
      assertEquals(pi, count[i] / (double) draws, 5 * se + 1e-12, "item " + i);
    }
    assertEquals(total, htMean, 0.01 * total);
  }

  @Test
  void itemsOfLargeShareAreDrawnEveryTimeAndTheRestReplanned() {
    // with n = 3, the item of size 100 would get π = 3·100/106 > 1: it is certain; the other two draws share
    // sizes 1..6 (π_i = 2 i / 21)
    double[] s = {100, 1, 2, 3, 4, 5, 6};
    ProportionalDraw plan = ProportionalDraw.plan(s, 3);
    assertEquals(1.0, plan.inclusion(0));
    assertEquals(0.0, plan.horvitzThompson(0, 100));
    for (int i = 1; i < s.length; i++) {
      assertEquals(2 * s[i] / 21, plan.inclusion(i), 1e-15);
    }
    UniformRandomProvider rng = RandomSource.SPLIT_MIX_64.create(3);
    int[] out = new int[3];
    long[] count = new long[s.length];
    int draws = 20_000;
    for (int b = 0; b < draws; b++) {
      plan.draw(rng, new int[s.length], out);
      for (int i : out) {
        count[i]++;
      }
    }
    assertEquals(draws, count[0]);
    for (int i = 1; i < s.length; i++) {
      double pi = 2 * s[i] / 21;
      assertEquals(pi, count[i] / (double) draws, 5 * Math.sqrt(pi * (1 - pi) / draws));
    }
  }

  @Test
  void aDrawDependsOnlyOnTheGeneratorState() {
    double[] s = {3, 1, 4, 1, 5, 9, 2, 6};
    ProportionalDraw plan = ProportionalDraw.plan(s, 4);
    int[] a = new int[4];
    int[] b = new int[4];
    int[] scratch = {7, 6, 5, 4, 3, 2, 1, 0};
    plan.draw(RandomSource.SPLIT_MIX_64.create(9), new int[8], a);
    plan.draw(RandomSource.SPLIT_MIX_64.create(9), scratch, b);
    assertEquals(java.util.Arrays.toString(a), java.util.Arrays.toString(b));
  }

  @Test
  void hugeSizesDoNotOverflow() {
    ProportionalDraw plan = ProportionalDraw.plan(new double[] {1e308, 1e308, 1e308, 5e307}, 1);
    // analytic: π = 1e308 / (3 × 1e308 + 5e307) = 1/3.5
    assertEquals(1 / 3.5, plan.inclusion(0), 1e-15);
    int[] out = new int[1];
    plan.draw(RandomSource.SPLIT_MIX_64.create(1), new int[4], out);
  }

  @Test
  void refusesWhatCannotBeDrawn() {
    assertThrows(IllegalArgumentException.class, () -> ProportionalDraw.plan(new double[] {1, 0, 0}, 2));
    assertThrows(IllegalArgumentException.class, () -> ProportionalDraw.plan(new double[] {1, -1}, 1));
    assertThrows(IllegalArgumentException.class, () -> ProportionalDraw.plan(new double[] {1, Double.NaN}, 1));
  }
}
