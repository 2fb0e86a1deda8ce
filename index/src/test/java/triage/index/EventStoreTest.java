package triage.index;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.math.BigDecimal;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;
import java.util.SplittableRandom;
import java.util.function.Predicate;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import triage.core.sample.ReadOptions;
import triage.core.sample.WeightPolicy;
import triage.core.provenance.Fingerprints;
import triage.index.TestSamples.Row;

/**
 * Round trip and aggregation: every value read back bit-exact, and every sum and histogram equal to a brute-force
 * scan of the same input files (exact sums in BigDecimal, compared within a few ulps of the result).
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class EventStoreTest {
  /** Seed of the samples and of the random selections. */
  static final long SEED = 20261202L;

  @TempDir
  static Path dir;

  EventStore store;

  List<Row> rows;

  IngestReport report;

  @BeforeAll
  void ingest() throws IOException {
    Path data = dir.resolve("data");
    var spec = TestSamples.write(data, 30_000, 4_000, SEED, true);
    // Small batches and a small RAM buffer: several batches in flight and several segments to combine.
    report = Ingest.run(spec, dir.resolve("index"), new Ingest.Options(
        ReadOptions.strict().with(WeightPolicy.ANY_FINITE).withBatchSize(1000), false, null, 2, 16), null);
    rows = TestSamples.bruteForce(data);
    store = EventStore.open(dir.resolve("index"));
  }

  @AfterAll
  void close() throws IOException {
    store.close();
  }

  @Test
  void countsReconcileAndManifestRecordsInputs() throws IOException {
    assertEquals(34_000, report.rowsRead());
    assertEquals(report.rowsRead(), report.rowsIndexed() + report.rowsRejected());
    Manifest m = store.manifest();
    assertEquals(Manifest.FORMAT, m.format());
    assertEquals(34_000, m.totalEvents());
    Manifest.Sample ref = m.sample("reference");
    assertEquals(30_000, ref.events());
    assertEquals(0, ref.firstRow());
    assertEquals(30_000, m.sample("observed").firstRow());
    assertEquals(rows.stream().filter(r -> r.sample().equals("reference") && r.w() < 0).count(),
        ref.negativeWeights());
    assertEquals(Fingerprints.sha256(dir.resolve("data/ref.csv")), ref.sha256());
    assertEquals(List.of("unused"), report.samples().get(0).ignoredColumns());
    assertEquals(Set.of(TestSamples.SECTORS), new HashSet<>(ref.categories().get("sector")));
    assertEquals(exactSum(rows, r -> r.sample().equals("reference"), Row::w), ref.sumOfWeights(),
        4 * Math.ulp(ref.sumOfWeights()));
  }

  @Test
  void valuesReadBackBitExact() throws IOException {
    double[][] cols = store.columns("reference", List.of("a", "b", "c", "event", "run", "block", "w_up"));
    double[] weights = store.weights("reference");
    List<Row> ref = rows.stream().filter(r -> r.sample().equals("reference")).toList();
    for (int i = 0; i < ref.size(); i++) {
      Row r = ref.get(i);
      for (int k = 0; k < 3; k++) {
        assertEquals(Double.doubleToRawLongBits(r.x()[k]), Double.doubleToRawLongBits(cols[k][i]), "row " + i);
      }
      assertEquals(r.id(), (long) cols[3][i]);
      assertEquals(r.run(), (long) cols[4][i]);
      assertEquals(r.block(), (long) cols[5][i]);
      assertEquals(Double.doubleToRawLongBits(r.up()), Double.doubleToRawLongBits(cols[6][i]));
      assertEquals(Double.doubleToRawLongBits(r.w()), Double.doubleToRawLongBits(weights[i]));
    }
    SplittableRandom random = new SplittableRandom(SEED);
    for (int t = 0; t < 50; t++) {
      Row r = rows.get(random.nextInt(rows.size()));
      EventRecord e = store.event(r.sample(), r.id()).orElseThrow();
      assertEquals(Double.doubleToRawLongBits(r.x()[1]), Double.doubleToRawLongBits(e.numbers().get("b")));
      assertEquals(Double.doubleToRawLongBits(r.w()), Double.doubleToRawLongBits(e.weight()));
      assertEquals(r.sector(), e.categories().get("sector"));
      assertEquals((double) r.run(), e.numbers().get("run"));
    }
    assertTrue(store.event("observed", 1).isEmpty(), "observed ids are multiples of 7");
    assertTrue(store.event("observed", 7).isPresent());
  }

  @Test
  void randomBoxSelectionsMatchBruteForce() throws IOException {
    SplittableRandom random = new SplittableRandom(SEED + 1);
    for (int t = 0; t < 40; t++) {
      Selection sel = Selection.all();
      List<Predicate<Row>> checks = new ArrayList<>();
      if (random.nextBoolean()) {
        double lo = random.nextGaussian();
        double hi = lo + random.nextDouble() * 2;
        sel = sel.and(new Selection.Range("a", lo, hi));
        checks.add(r -> r.x()[0] >= lo && r.x()[0] <= hi);
      }
      if (random.nextBoolean()) {
        double lo = random.nextDouble() * 10;
        sel = sel.and(new Selection.Range("b", lo, Double.POSITIVE_INFINITY));
        checks.add(r -> r.x()[1] >= lo);
      }
      if (random.nextInt(3) == 0) {
        long lo = 100 + random.nextInt(3);
        sel = sel.and(new Selection.Range("run", lo, lo + 1));
        checks.add(r -> r.run() >= lo && r.run() <= lo + 1);
      }
      if (random.nextInt(3) == 0) {
        double lo = random.nextInt(40);
        sel = sel.and(new Selection.Range("block", lo + 0.5, lo + 10));
        checks.add(r -> r.block() >= lo + 0.5 && r.block() <= lo + 10);
      }
      if (random.nextInt(3) == 0) {
        Set<String> allowed = new HashSet<>(List.of(TestSamples.SECTORS[random.nextInt(4)],
            TestSamples.SECTORS[random.nextInt(4)]));
        sel = sel.and(new Selection.CategoryIn("sector", allowed));
        checks.add(r -> allowed.contains(r.sector()));
      }
      if (random.nextInt(4) == 0) {
        sel = sel.inSamples(Set.of("observed"));
        checks.add(r -> r.sample().equals("observed"));
      }
      Predicate<Row> all = r -> checks.stream().allMatch(c -> c.test(r));
      List<SampleSums> sums = store.sums(sel);
      List<Histogram> hists = store.histogram(sel, "c", 10, -0.4, 0.4);
      for (int s = 0; s < 2; s++) {
        String sample = s == 0 ? "reference" : "observed";
        Predicate<Row> in = all.and(r -> r.sample().equals(sample));
        String what = "seed " + (SEED + 1) + ", selection " + t + ", " + sample;
        assertEquals(rows.stream().filter(in).count(), sums.get(s).count(), what);
        double sw = exactSum(rows, in, Row::w);
        assertEquals(sw, sums.get(s).sumOfWeights(), 4 * Math.ulp(Math.abs(sw)) + 1e-300, what);
        double sw2 = exactSum(rows, in, r -> r.w() * r.w());
        assertEquals(sw2, sums.get(s).sumOfSquaredWeights(), 8 * Math.ulp(sw2) + 1e-300, what);
        if (s == 0) {
          double up = exactSum(rows, in, Row::up);
          assertEquals(up, sums.get(s).upSums()[0], 4 * Math.ulp(Math.abs(up)) + 1e-300, what);
        }
        Histogram h = hists.get(s);
        for (int b = 0; b < 12; b++) {
          int bin = b;
          Predicate<Row> inBin = in.and(r -> Histogram.binOf(r.x()[2], 10, -0.4, 0.4) == bin);
          assertEquals(rows.stream().filter(inBin).count(), h.counts()[b], what + ", bin " + b);
          double hw = exactSum(rows, inBin, Row::w);
          assertEquals(hw, h.sumOfWeights()[b], 4 * Math.ulp(Math.abs(hw)) + 1e-300, what + ", bin " + b);
        }
        assertEquals(sums.get(s).count(), h.total(), what);
      }
    }
  }

  /** Conditions in WHERE syntax, each with the same condition in Java, checked against the brute-force rows. */
  @Test
  void whereConditionsMatchBruteForce() throws IOException {
    Map<String, Predicate<Row>> cases = new LinkedHashMap<>();
    cases.put("a > 0.5 AND sector IN ('n1', 's2')", r -> r.x()[0] > 0.5 && Set.of("n1", "s2").contains(r.sector()));
    cases.put("abs(a) < 1 AND b > 5 OR run = 102", r -> Math.abs(r.x()[0]) < 1 && r.x()[1] > 5 || r.run() == 102);
    cases.put("block BETWEEN 10 AND 20 AND NOT sector = 'n2'", r -> r.block() >= 10 && r.block() <= 20
        && !r.sector().equals("n2"));
    cases.put("w_up > 0.5 AND c < 0", r -> r.up() > 0.5 && r.x()[2] < 0);
    cases.put("a * 2 + c > b / 10 AND sector <> 's1'", r -> r.x()[0] * 2 + r.x()[2] > r.x()[1] / 10
        && !r.sector().equals("s1"));
    cases.put("a > 1 AND a < 0", r -> false);
    for (var c : cases.entrySet()) {
      List<SampleSums> sums = store.sums(store.where(c.getKey()));
      for (int s = 0; s < 2; s++) {
        String sample = s == 0 ? "reference" : "observed";
        Predicate<Row> in = c.getValue().and(r -> r.sample().equals(sample));
        assertEquals(rows.stream().filter(in).count(), sums.get(s).count(), c.getKey() + ", " + sample);
        double sw = exactSum(rows, in, Row::w);
        assertEquals(sw, sums.get(s).sumOfWeights(), 4 * Math.ulp(Math.abs(sw)) + 1e-300, c.getKey());
      }
    }
    // rows() reads only the kept events: the same values and weights as every event's columns and a mask.
    for (String condition : cases.keySet()) {
      Selection sel = store.where(condition);
      for (String sample : List.of("reference", "observed")) {
        java.util.BitSet mask = store.mask(sel, sample);
        double[][] all = store.columns(sample, List.of("a", "c"));
        double[] w = store.weights(sample);
        EventStore.SelectedRows kept = store.rows(sample, List.of("a", "c"), sel);
        assertEquals(mask.cardinality(), kept.weights().length, condition);
        int j = 0;
        for (int i = mask.nextSetBit(0); i >= 0; i = mask.nextSetBit(i + 1), j++) {
          assertEquals(all[0][i], kept.columns()[0][j], 0.0);
          assertEquals(all[1][i], kept.columns()[1][j], 0.0);
          assertEquals(w[i], kept.weights()[j], 0.0);
        }
      }
    }
    // without a condition rows() takes its one-pass path: every event, in row order
    for (String sample : List.of("reference", "observed")) {
      EventStore.SelectedRows every = store.rows(sample, List.of("a", "c"), Selection.all());
      double[][] all = store.columns(sample, List.of("a", "c"));
      org.junit.jupiter.api.Assertions.assertArrayEquals(all[0], every.columns()[0], 0.0);
      org.junit.jupiter.api.Assertions.assertArrayEquals(all[1], every.columns()[1], 0.0);
      org.junit.jupiter.api.Assertions.assertArrayEquals(store.weights(sample), every.weights(), 0.0);
    }
    triage.core.select.WhereException e = assertThrows(triage.core.select.WhereException.class,
        () -> store.where("a > 1 AND mass < 2"));
    assertTrue(e.getMessage().contains("unknown column 'mass'"), e.getMessage());
  }

  @Test
  void histogramEdgesFollowTheDocumentedConvention() {
    // Analytic: [lo, hi) in 4 bins of width 0.25; the upper edge goes to overflow, the lower edge to bin 1.
    assertEquals(0, Histogram.binOf(-0.001, 4, 0, 1));
    assertEquals(1, Histogram.binOf(0, 4, 0, 1));
    assertEquals(2, Histogram.binOf(0.25, 4, 0, 1));
    assertEquals(4, Histogram.binOf(0.999, 4, 0, 1));
    assertEquals(5, Histogram.binOf(1, 4, 0, 1));
    assertEquals(5, Histogram.binOf(Double.POSITIVE_INFINITY, 4, 0, 1));
  }

  @Test
  void scoresAreAddedWithoutReingestAndSelectable() throws IOException {
    Path index = dir.resolve("scored");
    var spec = TestSamples.write(dir.resolve("scored-data"), 2_000, 500, SEED + 2, false);
    Ingest.run(spec, index, Ingest.Options.defaults(), null);
    List<Row> data = TestSamples.bruteForce(dir.resolve("scored-data"));
    double[] scores = new double[data.size()];
    for (int i = 0; i < scores.length; i++) {
      scores[i] = data.get(i).x()[0] * 2 - data.get(i).x()[2];
    }
    try (EventStore s = EventStore.open(index)) {
      s.addScores("m1", scores, "{\"note\": \"test\"}");
    }
    try (EventStore s = EventStore.open(index)) {
      assertEquals("m1", s.manifest().models().get(0).version());
      assertEquals(Double.doubleToRawLongBits(scores[17]), Double.doubleToRawLongBits(s.scores("m1")[17]));
      List<SampleSums> sums = s.sums(Selection.all().and(new Selection.Range("score:m1", 0.5, 3)));
      for (int k = 0; k < 2; k++) {
        String sample = k == 0 ? "reference" : "observed";
        long want = 0;
        for (int i = 0; i < data.size(); i++) {
          if (data.get(i).sample().equals(sample) && scores[i] >= 0.5 && scores[i] <= 3) {
            want++;
          }
        }
        assertEquals(want, sums.get(k).count(), sample);
      }
      double[][] col = s.columns("observed", List.of("score:m1"));
      assertEquals(scores[2_000 + 3], col[0][3]);
      IndexException e = assertThrows(IndexException.class,
          () -> s.sums(Selection.all().and(new Selection.Range("score:m9", 0, 1))));
      assertTrue(e.getMessage().contains("no model version 'm9'"), e.getMessage());
    }
    // Two stores open on one index (two fits at once): the second one's manifest is stale, but adding a model
    // starts from the latest commit, so neither model is lost; a version that exists is refused.
    try (EventStore a = EventStore.open(index); EventStore b = EventStore.open(index)) {
      a.addScores("m2", scores, null);
      b.addScores("m3", scores, null);
      IndexException twice = assertThrows(IndexException.class, () -> b.addScores("m2", scores, null));
      assertTrue(twice.getMessage().contains("already has a model version 'm2'"), twice.getMessage());
    }
    try (EventStore s = EventStore.open(index)) {
      assertEquals(List.of("m1", "m2", "m3"), s.manifest().models().stream().map(Manifest.Model::version).toList());
    }
  }

  @Test
  void unknownColumnsAndSamplesAreNamed() {
    IndexException e = assertThrows(IndexException.class,
        () -> store.sums(Selection.all().and(new Selection.Range("mass", 0, 1))));
    assertTrue(e.getMessage().contains("no column 'mass'") && e.getMessage().contains("a, b, c"), e.getMessage());
    IndexException s = assertThrows(IndexException.class, () -> store.weights("data"));
    assertTrue(s.getMessage().contains("no sample 'data' (it has: reference, observed)"), s.getMessage());
  }

  /** The exact sum of a quantity over matching rows, rounded once to double. */
  static double exactSum(List<Row> rows, Predicate<Row> in, java.util.function.ToDoubleFunction<Row> value) {
    BigDecimal sum = BigDecimal.ZERO;
    for (Row r : rows) {
      if (in.test(r)) {
        sum = sum.add(new BigDecimal(value.applyAsDouble(r)));
      }
    }
    return sum.doubleValue();
  }
}
