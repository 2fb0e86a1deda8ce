package triage.core.inference;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/** Reads the CSV fixtures written by src/test/resources/triage/core/inference/generate_fixtures.py. */
final class Fixtures {
  private Fixtures() {
  }

  /** Rows of numbers; '#' lines and the header line are skipped. */
  static List<double[]> rows(String resource) {
    final List<double[]> rows = new ArrayList<>();
    for (final String[] f : rowsWithText(resource)) {
      final double[] v = new double[f.length];
      for (int i = 0; i < f.length; i++) {
        v[i] = Double.parseDouble(f[i]);
      }
      rows.add(v);
    }
    return rows;
  }

  /** Rows as text fields (for fixtures with a text column); '#' lines and the header line are skipped. */
  static List<String[]> rowsWithText(String resource) {
    try (InputStream in = Fixtures.class.getResourceAsStream(resource)) {
      if (in == null) {
        throw new IllegalStateException("missing fixture " + resource);
      }
      final BufferedReader r = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
      final List<String[]> rows = new ArrayList<>();
      boolean header = true;
      for (String line = r.readLine(); line != null; line = r.readLine()) {
        if (line.startsWith("#") || line.isBlank()) {
          continue;
        }
        if (header) {
          header = false;
          continue;
        }
        rows.add(line.split(","));
      }
      return rows;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }

  /** Single column as an array. */
  static double[] column(String resource) {
    final List<double[]> rows = rows(resource);
    final double[] v = new double[rows.size()];
    for (int i = 0; i < v.length; i++) {
      v[i] = rows.get(i)[0];
    }
    return v;
  }
}
