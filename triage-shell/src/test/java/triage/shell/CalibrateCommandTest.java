package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;
import static triage.shell.CliTest.JSON;
import static triage.shell.CliTest.run;

import com.fasterxml.jackson.databind.JsonNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code triage calibrate} end to end on a small 1D index (2,000 reference events of unit-scale weight summing to
 * 100, 100 observed, a 1-2-1 network of 7 parameters): merging shards made on copies of the index, clip tuning and
 * its use by fit, signal injection, plots.
 */
class CalibrateCommandTest {
  @TempDir
  Path dir;

  /** Writes samples (seed 8), ingests them into DIR/a and fits m1 (layers 2, 100 iterations, one thread). */
  private Path fittedIndex() throws IOException {
    return fittedIndex(false);
  }

  /** As {@link #fittedIndex()}; with {@code negative}, every 50th reference weight is −0.01 instead. */
  private Path fittedIndex(boolean negative) throws IOException {
    StringBuilder ref = new StringBuilder("event,m,w\n");
    StringBuilder obs = new StringBuilder("event,m\n");
    StringBuilder sig = new StringBuilder("event,m\n");
    java.util.SplittableRandom r = new java.util.SplittableRandom(8);
    for (int i = 0; i < 2000; i++) {
      double w = 0.025 + 0.05 * r.nextDouble();
      ref.append(i).append(',').append(r.nextGaussian()).append(',').append(negative && i % 50 == 7 ? -0.01 : w)
          .append('\n');
    }
    for (int i = 0; i < 100; i++) {
      obs.append(i).append(',').append(r.nextGaussian()).append('\n');
    }
    // A follow-up sample that is pure signal: a narrow peak at m = 2.
    for (int i = 0; i < 200; i++) {
      sig.append(10_000 + i).append(',').append(2 + 0.1 * r.nextGaussian()).append('\n');
    }
    Files.writeString(dir.resolve("ref.csv"), ref);
    Files.writeString(dir.resolve("obs.csv"), obs);
    Files.writeString(dir.resolve("sig.csv"), sig);
    Path index = dir.resolve("a");
    List<String> args = new ArrayList<>(List.of("ingest", "--index", index.toString(), "--reference",
        dir.resolve("ref.csv").toString(), "--observed", dir.resolve("obs.csv").toString(), "--followup-observed",
        dir.resolve("sig.csv").toString(), "--features", "m", "--weight", "w"));
    if (negative) {
      args.add("--allow-negative-weights");
    }
    CliTest.Run ingest = run(args.toArray(String[]::new));
    assertEquals(0, ingest.code(), ingest.err());
    CliTest.Run fit = run("fit", "--index", index.toString(), "--layers", "2", "--max-iterations", "100",
        "--threads", "1");
    assertEquals(0, fit.code(), fit.err());
    return index;
  }

  private static void copy(Path from, Path to) throws IOException {
    try (Stream<Path> all = Files.walk(from)) {
      for (Path p : all.toList()) {
        Path q = to.resolve(from.relativize(p).toString());
        if (Files.isDirectory(p)) {
          Files.createDirectories(q);
        } else {
          Files.copy(p, q);
        }
      }
    }
  }

  /** The toys of a calibrate JSON result without their wall times, which differ between runs. */
  private static List<String> toySet(JsonNode result) {
    List<String> out = new ArrayList<>();
    for (JsonNode t : result.get("toys")) {
      out.add(t.get("toy").asLong() + "/" + t.get("seed").asLong() + "/" + t.get("events").asInt() + "/"
          + Double.doubleToLongBits(t.get("t").asDouble()) + "/" + t.get("converged").asBoolean() + "/"
          + t.get("iterations").asInt());
    }
    return out;
  }

  /**
   * Shards 1/2 and 2/2 run in two copies of the index and merged into a third give exactly (bit for bit in t) the
   * toy set of an unsharded run in a fourth, and so does an interrupted run resumed in a fifth; merging again adds
   * nothing; a file of another seed and a file whose t disagrees are refused, naming the file and the reason.
   */
  @Test
  void shardsMergedFromCopiesEqualTheUnshardedRun() throws IOException {
    Path a = fittedIndex();
    Path b = dir.resolve("b");
    Path c = dir.resolve("c");
    Path d = dir.resolve("d");
    copy(a, b);
    copy(a, c);
    copy(a, d);
    Path e = dir.resolve("e");
    copy(a, e);
    assertEquals(0, run("calibrate", "--index", a.toString(), "--toys", "6", "--shard", "1/2", "--plot", "none")
        .code());
    assertEquals(0, run("calibrate", "--index", b.toString(), "--toys", "6", "--shard", "2/2", "--plot", "none")
        .code());
    Path fa = a.resolve("toys/m1/seed-1-shard-1-of-2.jsonl");
    Path fb = b.resolve("toys/m1/seed-1-shard-2-of-2.jsonl");
    CliTest.Run merged = run("calibrate", "--index", c.toString(), "--merge", fa.toString(), fb.toString(),
        "--json", "--plot", "none");
    assertEquals(0, merged.code(), merged.err());
    JsonNode m = JSON.readTree(merged.out());
    assertEquals(3, m.get("merged").get(0).get("added").asInt());
    assertEquals(3, m.get("merged").get(1).get("added").asInt());
    CliTest.Run whole = run("calibrate", "--index", d.toString(), "--toys", "6", "--json", "--plot", "none");
    assertEquals(0, whole.code(), whole.err());
    JsonNode w = JSON.readTree(whole.out());
    assertEquals(6, toySet(w).size());
    assertEquals(toySet(w), toySet(m));
    assertEquals(w.get("summary").get("empirical").get("pValue").asDouble(),
        m.get("summary").get("empirical").get("pValue").asDouble(), 0.0);

    // An interrupted run (3 toys done, then a line torn by a kill mid-write) resumes to the same toy set.
    assertEquals(0, run("calibrate", "--index", e.toString(), "--toys", "3", "--plot", "none").code());
    Path fe = e.resolve("toys/m1/seed-1-shard-1-of-1.jsonl");
    Files.writeString(fe, "{\"toy\":3,\"seed\":12", java.nio.file.StandardOpenOption.APPEND);
    CliTest.Run resumed = run("calibrate", "--index", e.toString(), "--toys", "6", "--json", "--plot", "none");
    assertEquals(0, resumed.code(), resumed.err());
    assertTrue(resumed.err().contains("3 toys already done (all shards), 3 to fit"), resumed.err());
    assertEquals(toySet(w), toySet(JSON.readTree(resumed.out())));

    CliTest.Run again = run("calibrate", "--index", c.toString(), "--merge", fa.toString(), "--json", "--plot",
        "none");
    assertEquals(0, again.code(), again.err());
    assertEquals(0, JSON.readTree(again.out()).get("merged").get(0).get("added").asInt());
    assertEquals(3, JSON.readTree(again.out()).get("merged").get(0).get("duplicates").asInt());

    assertEquals(0, run("calibrate", "--index", b.toString(), "--toys", "2", "--seed", "2", "--plot", "none")
        .code());
    CliTest.Run otherSeed = run("calibrate", "--index", c.toString(), "--merge",
        b.resolve("toys/m1/seed-2-shard-1-of-1.jsonl").toString());
    assertEquals(ExitCodes.INPUT, otherSeed.code());
    assertTrue(otherSeed.err().contains("seed-2-shard-1-of-1.jsonl") && otherSeed.err().contains("run seed 2"),
        otherSeed.err());
    assertFalse(otherSeed.err().contains("\tat "), otherSeed.err());

    Path tampered = dir.resolve("tampered.jsonl");
    List<String> lines = Files.readAllLines(fa);
    JsonNode first = JSON.readTree(lines.get(1));
    lines.set(1, lines.get(1).replace("\"t\":" + first.get("t").asText(), "\"t\":" + (first.get("t").asDouble()
        + 1)));
    Files.write(tampered, lines);
    CliTest.Run bad = run("calibrate", "--index", c.toString(), "--merge", tampered.toString());
    assertEquals(ExitCodes.INPUT, bad.code());
    assertTrue(bad.err().contains("tampered.jsonl") && bad.err().contains("toy " + first.get("toy").asLong()
        + " has t"), bad.err());
  }

  /**
   * Clip tuning on the small case: the chosen clip is one whose curves plateaued, it is recorded, a rerun fits
   * nothing new, {@code fit --clip tuned} uses it, calibrate reports it, and both plots are written.
   */
  @Test
  void tuneClipRecordsAPlateauedClipThatFitUses() throws IOException {
    Path a = fittedIndex();
    String[] tune = {"calibrate", "--index", a.toString(), "--tune-clip", "--toys", "8", "--clips", "0.5,1,6",
        "--caps", "3,100,1000", "--json"};
    CliTest.Run r = run(tune);
    assertEquals(0, r.code(), r.err());
    JsonNode j = JSON.readTree(r.out());
    JsonNode choice = j.get("choice");
    assertTrue(choice.get("clip").isNumber(), j.toString());
    double chosen = choice.get("clip").asDouble();
    boolean plateaued = false;
    for (JsonNode cv : choice.get("curves")) {
      assertEquals(3, cv.get("median").size());
      if (cv.get("clip").asDouble() == chosen) {
        plateaued = cv.get("plateau").asBoolean();
      }
    }
    assertTrue(plateaued, j.toString());
    Path record = a.resolve("toys/tuned-clip.json");
    assertTrue(Files.exists(record));
    for (JsonNode p : j.get("plots")) {
      assertTrue(Files.size(Path.of(p.asText())) > 1000, p.asText());
    }
    CliTest.Run again = run(tune);
    assertTrue(again.err().contains("0 fits to do"), again.err());

    CliTest.Run fit = run("fit", "--index", a.toString(), "--layers", "2", "--max-iterations", "100", "--threads",
        "1", "--clip", "tuned", "--json");
    assertEquals(0, fit.code(), fit.err());
    assertEquals(chosen, JSON.readTree(fit.out()).get("settings").get("clip").asDouble(), 0.0);
    CliTest.Run wrongNet = run("fit", "--index", a.toString(), "--layers", "3", "--clip", "tuned");
    assertEquals(ExitCodes.INPUT, wrongNet.code());
    assertTrue(wrongNet.err().contains("was chosen for layers [2]"), wrongNet.err());

    CliTest.Run cal = run("calibrate", "--index", a.toString(), "--toys", "2", "--json");
    assertEquals(0, cal.code(), cal.err());
    JsonNode cj = JSON.readTree(cal.out());
    assertEquals("m2", cj.get("model").asText());
    assertEquals(chosen, cj.get("tunedClip").get("clip").asDouble(), 0.0);
    assertEquals(chosen, cj.get("tunedClip").get("modelClip").asDouble(), 0.0);
    assertEquals(2, cj.get("plots").size());
    assertTrue(Files.exists(a.resolve("toys/m2/toys-seed-1.png")));
    assertTrue(Files.readString(a.resolve("toys/m2/toys-seed-1.svg")).contains("<svg"));
  }

  /**
   * Signal injection, a bump and a sample: with 19 null toys and 40 injected events on 100 expected, the median
   * signal t lies far above the null toys, so the median expected Z is large (above 2; the null's own median Z is
   * about 0 by construction); the signal toys are stored apart from the null toys.
   */
  @Test
  void injectionRaisesTheMedianZAboveTheNull() throws IOException {
    Path a = fittedIndex();
    assertEquals(0, run("calibrate", "--index", a.toString(), "--toys", "19", "--plot", "none").code());
    CliTest.Run bump = run("calibrate", "--index", a.toString(), "--toys", "9", "--inject-bump", "m=2,0.1",
        "--inject-yield", "40", "--json");
    assertEquals(0, bump.code(), bump.err());
    JsonNode s = JSON.readTree(bump.out()).get("sensitivity");
    assertEquals(19, s.get("nullToys").asInt());
    assertTrue(s.get("zMedian").asDouble() > 2, s.toString());
    assertNotNull(s.get("source").asText());
    assertTrue(Files.isDirectory(a.resolve("toys/m1/signal/bump-m-2.0-0.1-yield-40.0")));

    JsonNode info = JSON.readTree(run("info", "--index", a.toString(), "--json").out()).get("manifest");
    String name = null;
    for (JsonNode sample : info.get("samples")) {
      if (sample.get("role").asText().equals("followup-observed")) {
        name = sample.get("name").asText();
      }
    }
    CliTest.Run sample = run("calibrate", "--index", a.toString(), "--toys", "5", "--inject-sample", name,
        "--inject-yield", "40", "--json", "--plot", "none");
    assertEquals(0, sample.code(), sample.err());
    JsonNode ss = JSON.readTree(sample.out()).get("sensitivity");
    assertTrue(ss.get("zMedian").asDouble() > 2, ss.toString());
    // The null toys were not touched: still 19.
    CliTest.Run nulls = run("calibrate", "--index", a.toString(), "--toys", "19", "--json", "--plot", "none");
    assertEquals(19, JSON.readTree(nulls.out()).get("toys").size());

    CliTest.Run badFeature = run("calibrate", "--index", a.toString(), "--toys", "5", "--inject-bump", "x=1,1",
        "--inject-yield", "4");
    // a name the index lacks is invalid input (3), a malformed value a usage error (2): docs/json.md
    assertEquals(ExitCodes.INPUT, badFeature.code());
    assertTrue(badFeature.err().contains("'x' is not a feature"), badFeature.err());
    CliTest.Run badSample = run("calibrate", "--index", a.toString(), "--toys", "5", "--inject-sample", "nosuch",
        "--inject-yield", "4");
    assertEquals(ExitCodes.INPUT, badSample.code(), badSample.err());
    assertTrue(badSample.err().contains("the index has no sample 'nosuch'"), badSample.err());
    CliTest.Run noYield = run("calibrate", "--index", a.toString(), "--toys", "5", "--inject-bump", "m=1,1");
    assertEquals(ExitCodes.USAGE, noYield.code());
  }

  /**
   * A weighted signal simulation declared with the reference role (as docs/sample-spec.md suggests) can be injected;
   * only the reference the toys are drawn from is refused.
   */
  @Test
  void aWeightedSignalSampleWithTheReferenceRoleCanBeInjected() throws IOException {
    fittedIndex();
    StringBuilder sig = new StringBuilder("event,m,w\n");
    java.util.SplittableRandom r = new java.util.SplittableRandom(9);
    for (int i = 0; i < 300; i++) {
      sig.append(20_000 + i).append(',').append(2 + 0.1 * r.nextGaussian()).append(',')
          .append(0.5 + r.nextDouble()).append('\n');
    }
    Files.writeString(dir.resolve("wsig.csv"), sig);
    Files.writeString(dir.resolve("spec.json"), """
        {"format": "triage-samples/1", "columns": {"features": ["m"], "id": "event"},
         "samples": [{"name": "reference", "role": "reference", "file": "ref.csv", "weight": "w"},
                     {"name": "observed", "role": "observed", "file": "obs.csv"},
                     {"name": "signal", "role": "reference", "file": "wsig.csv", "weight": "w"}]}
        """);
    Path b = dir.resolve("b");
    assertEquals(0, run("ingest", "--index", b.toString(), "--spec", dir.resolve("spec.json").toString()).code());
    assertEquals(0, run("fit", "--index", b.toString(), "--layers", "2", "--max-iterations", "100", "--threads",
        "1").code());
    CliTest.Run ok = run("calibrate", "--index", b.toString(), "--toys", "3", "--inject-sample", "signal",
        "--inject-yield", "20", "--plot", "none", "--json");
    assertEquals(0, ok.code(), ok.err());
    assertEquals(3, JSON.readTree(ok.out()).get("toys").size(), ok.out());
    CliTest.Run own = run("calibrate", "--index", b.toString(), "--toys", "3", "--inject-sample", "reference",
        "--inject-yield", "20");
    assertEquals(ExitCodes.INPUT, own.code(), own.err());
    assertTrue(own.err().contains("is the reference sample the toys are drawn from"), own.err());
    // a plot that cannot be written (its folder is a file) is invalid input naming it, not a crash
    CliTest.Run blocked = run("calibrate", "--index", b.toString(), "--toys", "3", "--plot",
        dir.resolve("spec.json").resolve("p").toString());
    assertEquals(ExitCodes.INPUT, blocked.code(), blocked.err());
    assertTrue(blocked.err().contains("cannot write the plot here"), blocked.err());
    assertFalse(blocked.err().contains("\tat "), blocked.err());
    CliTest.Run hist = run("hist", "--index", b.toString(), "--column", "m", "--png",
        dir.resolve("spec.json").resolve("h.png").toString());
    assertEquals(ExitCodes.INPUT, hist.code(), hist.err());
    assertTrue(hist.err().contains("spec.json: is a file"), hist.err());
  }

  /**
   * A reference with negative weights cannot give toys (review: a trace saying "cannot be sampled … this is a
   * bug"): every mode that draws toys (null toys, clip tuning, signal injection) is refused before anything is
   * written, exit 3, one line saying why (events are drawn with probability proportional to weight) and what to do.
   */
  @Test
  void toysFromNegativeWeightsAreRefusedWithTheReason() throws IOException {
    Path index = fittedIndex(true);
    String[][] modes = {{"--toys", "3"}, {"--tune-clip", "--toys", "2", "--clips", "2", "--caps", "5,10"},
        {"--inject-bump", "m=2,0.1", "--inject-yield", "5", "--toys", "2"}};
    for (String[] mode : modes) {
      List<String> args = new ArrayList<>(List.of("calibrate", "--index", index.toString(), "--model", "m1"));
      args.addAll(List.of(mode));
      CliTest.Run r = run(args.toArray(String[]::new));
      assertEquals(ExitCodes.INPUT, r.code(), String.join(" ", mode) + ": " + r.err());
      // 40 of the 2,000 reference events (i % 50 == 7) have weight −0.01
      assertTrue(r.err().contains("toys need every reference weight positive, and this reference has 40 negative "
          + "and 0 zero weights"), r.err());
      assertTrue(r.err().contains("probability proportional to weight"), r.err());
      assertFalse(r.err().contains("\tat "), r.err());
      assertEquals(1, r.err().strip().lines().filter(l -> !l.startsWith("WARNING")).count(), r.err());
    }
    try (Stream<Path> files = Files.walk(index.resolve("toys"))) {
      assertTrue(files.noneMatch(p -> p.toString().endsWith(".jsonl")), "no toy written");
    } catch (java.nio.file.NoSuchFileException e) {
      // no toys folder at all: nothing written either
    }
  }
}
