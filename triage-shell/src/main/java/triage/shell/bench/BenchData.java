package triage.shell.bench;

import java.io.BufferedWriter;
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

/**
 * Generated benchmark samples: features {@code x0 … x(k−1)} uniform on [0, 1) with six decimals, a run number,
 * a positive weight, and sequential ids. A reference file holds 90% of the events, an observed file 10%.
 */
final class BenchData {
  private BenchData() {
    // no instance
  }

  /** The spec of files written by {@link #write}. */
  static SampleSpec spec(Path folder, int features) {
    List<String> names = new ArrayList<>();
    for (int k = 0; k < features; k++) {
      names.add("x" + k);
    }
    Columns columns = new Columns(names, "event", "run", null, List.of(), null);
    return new SampleSpec(SampleSpec.FORMAT, columns, List.of(),
        List.of(new SampleSource("reference", Role.REFERENCE, folder.resolve("reference.csv").toString(), "weight"),
            new SampleSource("observed", Role.OBSERVED, folder.resolve("observed.csv").toString(), null)));
  }

  /** Writes {@code reference.csv} and {@code observed.csv} with {@code events} rows in all. */
  static SampleSpec write(Path folder, long events, int features, long seed) throws IOException {
    Files.createDirectories(folder);
    SplittableRandom r = new SplittableRandom(seed);
    long reference = events - events / 10;
    writeFile(folder.resolve("reference.csv"), 0, reference, features, true, r);
    writeFile(folder.resolve("observed.csv"), reference, events - reference, features, false, r);
    return spec(folder, features);
  }

  private static void writeFile(Path file, long firstId, long n, int features, boolean weighted,
      SplittableRandom r) throws IOException {
    try (Writer w = new BufferedWriter(Files.newBufferedWriter(file, StandardCharsets.US_ASCII), 1 << 20)) {
      StringBuilder line = new StringBuilder(256);
      line.append("event,run");
      for (int k = 0; k < features; k++) {
        line.append(",x").append(k);
      }
      if (weighted) {
        line.append(",weight");
      }
      line.append('\n');
      w.append(line);
      for (long i = 0; i < n; i++) {
        line.setLength(0);
        line.append(firstId + i).append(',').append(1000 + r.nextInt(100));
        for (int k = 0; k < features; k++) {
          line.append(',');
          appendMicros(line, r.nextInt(1_000_000));
        }
        if (weighted) {
          line.append(',');
          appendMicros(line, 500_000 + r.nextInt(1_000_000));
        }
        line.append('\n');
        w.append(line);
      }
    }
  }

  /** Appends micros / 1e6 as a decimal with six places. */
  static void appendMicros(StringBuilder b, int micros) {
    b.append(micros / 1_000_000).append('.');
    String frac = Integer.toString(micros % 1_000_000);
    for (int i = frac.length(); i < 6; i++) {
      b.append('0');
    }
    b.append(frac);
  }
}
