package triage.index;

import java.io.IOException;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import triage.core.sample.Columns;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.Variation;

/**
 * Writes small random samples for index tests, and reads them back by brute force (plain string splitting and
 * {@link Double#parseDouble}), independently of the code under test. Doubles are written with
 * {@link Double#toString}, which round-trips exactly.
 */
final class TestSamples {
  /** Features of the test samples. */
  static final List<String> FEATURES = List.of("a", "b", "c");

  /** The categories used for the sector column. */
  static final String[] SECTORS = {"n1", "n2", "s1", "s2"};

  /** One event as read back by brute force. */
  record Row(String sample, long id, long run, long block, String sector, double[] x, double w, double up,
      double down) {}

  private TestSamples() {}

  /** The spec of the files {@link #write} makes. */
  static SampleSpec spec(Path folder) {
    Columns columns = new Columns(FEATURES, "event", "run", "block", List.of("sector"), null);
    return new SampleSpec(SampleSpec.FORMAT, columns, List.of(new Variation("scale", "w_up", "w_down")),
        List.of(new SampleSource("reference", Role.REFERENCE, folder.resolve("ref.csv").toString(), "w"),
            new SampleSource("observed", Role.OBSERVED, folder.resolve("obs.tsv").toString(), null)));
  }

  /** Writes a reference CSV (weighted, some negative weights when asked) and an observed TSV. */
  static SampleSpec write(Path folder, int nRef, int nObs, long seed, boolean negativeWeights) throws IOException {
    Files.createDirectories(folder);
    SplittableRandom r = new SplittableRandom(seed);
    try (Writer w = Files.newBufferedWriter(folder.resolve("ref.csv"), StandardCharsets.UTF_8)) {
      w.write("event,run,block,sector,a,b,c,w,w_up,w_down,unused\n");
      for (int i = 0; i < nRef; i++) {
        double weight = negativeWeights && r.nextInt(10) == 0 ? -r.nextDouble() : 0.01 + r.nextDouble();
        w.write((1000 + 3L * i) + "," + (100 + r.nextInt(5)) + "," + r.nextInt(50) + ","
            + SECTORS[r.nextInt(SECTORS.length)] + "," + r.nextGaussian() + "," + r.nextExponential() * 10 + ","
            + (r.nextDouble() - 0.5) + "," + weight + "," + weight * 1.1 + "," + weight * 0.9 + ",z\n");
      }
    }
    try (Writer w = Files.newBufferedWriter(folder.resolve("obs.tsv"), StandardCharsets.UTF_8)) {
      w.write("event\trun\tblock\tsector\ta\tb\tc\n");
      for (int i = 0; i < nObs; i++) {
        w.write((7L * i) + "\t" + (100 + r.nextInt(5)) + "\t" + r.nextInt(50) + "\t"
            + SECTORS[r.nextInt(SECTORS.length)] + "\t" + (0.3 + r.nextGaussian()) + "\t"
            + r.nextExponential() * 12 + "\t" + (r.nextDouble() - 0.5) + "\n");
      }
    }
    return spec(folder);
  }

  /** Reads both files back by brute force. */
  static List<Row> bruteForce(Path folder) throws IOException {
    List<Row> rows = new ArrayList<>();
    List<String> ref = Files.readAllLines(folder.resolve("ref.csv"));
    for (String line : ref.subList(1, ref.size())) {
      String[] f = line.split(",");
      rows.add(new Row("reference", Long.parseLong(f[0]), Long.parseLong(f[1]), Long.parseLong(f[2]), f[3],
          new double[] {Double.parseDouble(f[4]), Double.parseDouble(f[5]), Double.parseDouble(f[6])},
          Double.parseDouble(f[7]), Double.parseDouble(f[8]), Double.parseDouble(f[9])));
    }
    List<String> obs = Files.readAllLines(folder.resolve("obs.tsv"));
    for (String line : obs.subList(1, obs.size())) {
      String[] f = line.split("\t");
      rows.add(new Row("observed", Long.parseLong(f[0]), Long.parseLong(f[1]), Long.parseLong(f[2]), f[3],
          new double[] {Double.parseDouble(f[4]), Double.parseDouble(f[5]), Double.parseDouble(f[6])}, 1.0,
          Double.NaN, Double.NaN));
    }
    return rows;
  }
}
