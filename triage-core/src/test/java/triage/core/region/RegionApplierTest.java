package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.core.ratio.FitSettings;
import triage.core.ratio.RatioModel;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.StoppingRule;
import triage.core.ratio.TrainingData;
import triage.core.sample.Columns;
import triage.core.sample.ReadOptions;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.ScaleShift;
import triage.core.select.Where;

/** A frozen region applied to a streamed reference file, with its scale systematics evaluated as stress does. */
class RegionApplierTest {
  @TempDir
  Path dir;

  /** Features m, pt; id event; no run, block, categories or score column. */
  static final Columns COLUMNS = new Columns(List.of("m", "pt"), "event", null, null, List.of(), null);

  /** A region with no discovery yields to check (n_d = 0, b_d = 0) and no variations. */
  private static Region region(String where, Region.Model model) {
    Map<String, Where.Kind> kinds = Region.kinds(COLUMNS, List.of(), model);
    var plan = Where.plan(Where.parse(where, kinds), kinds);
    return new Region(Region.FORMAT, "r", where, Region.cutsOf(plan), Region.needsResidual(plan) ? "apply" : null,
        COLUMNS, List.of(), List.of(), model, new Region.Discovery(0, 0, 0, 0, Map.of(), Double.NaN, true), null,
        IdSet.of(new long[0]), List.of());
  }

  /** Reference events m = 1, …, 100, pt = 2m, of weight 1 (weight 2 for the even events when asked). */
  private SampleSpec reference(boolean unequal) throws Exception {
    StringBuilder text = new StringBuilder("event,m,pt,w\n");
    for (int i = 1; i <= 100; i++) {
      text.append(i).append(',').append(i).append(',').append(2 * i).append(',')
          .append(unequal && i % 2 == 0 ? 2 : 1).append('\n');
    }
    Path file = dir.resolve("ref.csv");
    Files.writeString(file, text);
    return new SampleSpec(SampleSpec.FORMAT, COLUMNS, List.of(), List.of(new SampleSource("r",
        Role.FOLLOWUP_REFERENCE, file.toString(), "w")));
  }

  /**
   * By hand, as in the stress command's test: m &gt; 50 keeps 51..100 (50 events); with m scaled by 1.1 it keeps
   * m &gt; 45.45, 46..100 (55), by 0.9 m &gt; 55.56, 56..100 (45). A shift of pt alone does not move the box in m.
   * With the even events at weight 2: 75 (51..100: 25 even, 25 odd), 83 (46..100: 28 even, 27 odd), 68 (56..100:
   * 23 even, 22 odd).
   */
  @Test
  void scaleShiftsMoveTheBoxAsByHand() throws Exception {
    List<ScaleShift> scales = List.of(new ScaleShift("m_scale", List.of("m"), 0.1),
        new ScaleShift("pt_scale", List.of("pt"), 0.1));
    SampleSpec spec = reference(false);
    RegionApplier.Yield y = RegionApplier.apply(region("m > 50", null), spec, spec.samples().get(0),
        ReadOptions.strict(), scales);
    assertEquals(50, y.sumOfWeights(), 0);
    assertArrayEquals(new double[] {55, 45}, y.scales().get("m_scale"), 0);
    assertArrayEquals(new double[] {50, 50}, y.scales().get("pt_scale"), 0);
    spec = reference(true);
    y = RegionApplier.apply(region("m > 50 AND pt > 0", null), spec, spec.samples().get(0), ReadOptions.strict(),
        scales);
    assertEquals(75, y.sumOfWeights(), 0);
    assertArrayEquals(new double[] {83, 68}, y.scales().get("m_scale"), 0);
    // observed samples carry no weights to shift: no scale yields
    SampleSpec obs = new SampleSpec(SampleSpec.FORMAT, COLUMNS, List.of(), List.of(new SampleSource("o",
        Role.FOLLOWUP_OBSERVED, spec.samples().get(0).file(), null)));
    assertEquals(Map.of(), RegionApplier.apply(region("m > 50", null), obs, obs.samples().get(0),
        ReadOptions.strict(), scales).scales());
  }

  /**
   * A score region: the frozen model scores the scaled features again. Expected: a brute-force loop over the
   * events calling {@link RatioModel#score} on (1 ± δ)·m; the threshold sits midway between two neighbouring
   * nominal scores, away from every score.
   */
  @Test
  void aScoreRegionIsScoredAgainOnScaledFeatures() throws Exception {
    double[] refX = new double[200];
    double[] obsX = new double[100];
    for (int i = 0; i < refX.length; i++) {
      refX[i] = (i % 100) + 1;
    }
    for (int i = 0; i < obsX.length; i++) {
      obsX[i] = 60 + 0.3 * i;
    }
    double[] ones = new double[refX.length];
    Arrays.fill(ones, 1);
    String json = RatioTrainer.fit(TrainingData.of(List.of("m"), refX, ones, obsX), FitSettings.defaults()
        .withHiddenWidths(List.of(2)).withThreads(1)
        .withStoppingRule(StoppingRule.defaults().withMaxIterations(30))).model().toJson();
    RatioModel model = RatioModel.fromJson(json);
    double[] nominal = new double[100];
    for (int i = 0; i < 100; i++) {
      nominal[i] = model.score(new double[] {i + 1});
    }
    double[] sorted = nominal.clone();
    Arrays.sort(sorted);
    double threshold = 0.5 * (sorted[60] + sorted[61]);
    String sha = triage.core.provenance.Fingerprints.sha256(json.getBytes(java.nio.charset.StandardCharsets.UTF_8));
    Region region = region("score:m1 > " + threshold, new Region.Model("m1", sha, json));
    double[] expected = new double[3];
    double[] factors = {1, 1.05, 0.95};
    for (int k = 0; k < 3; k++) {
      for (int i = 1; i <= 100; i++) {
        expected[k] += model.score(new double[] {i * factors[k]}) > threshold ? 1 : 0;
      }
    }
    assertTrue(expected[1] != expected[0] && expected[2] != expected[0], Arrays.toString(expected));
    SampleSpec spec = reference(false);
    RegionApplier.Yield y = RegionApplier.apply(region, spec, spec.samples().get(0), ReadOptions.strict(),
        List.of(new ScaleShift("m_scale", List.of("m"), 0.05), new ScaleShift("pt_scale", List.of("pt"), 0.05)));
    assertEquals(expected[0], y.sumOfWeights(), 0);
    assertArrayEquals(new double[] {expected[1], expected[2]}, y.scales().get("m_scale"), 0);
    assertArrayEquals(new double[] {expected[0], expected[0]}, y.scales().get("pt_scale"), 0);
  }
}
