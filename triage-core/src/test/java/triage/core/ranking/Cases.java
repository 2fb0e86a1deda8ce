package triage.core.ranking;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;

/** Reads two-sample-cases.txt written by src/test/resources/triage/core/ranking/generate_fixtures.py. */
final class Cases {
  private Cases() {
  }

  /** One case: named arrays; missing weights mean unit weights. */
  record Case(String name, Map<String, double[]> values) {
    double[] get(String key) {
      return values.get(key);
    }

    double scalar(String key) {
      return values.get(key)[0];
    }

    boolean has(String key) {
      return values.containsKey(key);
    }

    @Override
    public String toString() {
      return name;
    }
  }

  static List<Case> all() {
    try (InputStream in = Cases.class.getResourceAsStream("two-sample-cases.txt")) {
      final BufferedReader r = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8));
      final List<Case> cases = new ArrayList<>();
      String name = null;
      Map<String, double[]> map = null;
      for (String line = r.readLine(); line != null; line = r.readLine()) {
        if (line.startsWith("#") || line.isBlank()) {
          continue;
        }
        final String[] f = line.trim().split(" ");
        if (f[0].equals("case")) {
          name = f[1];
          map = new HashMap<>();
        } else if (f[0].equals("end")) {
          cases.add(new Case(name, map));
        } else {
          final double[] v = new double[f.length - 1];
          for (int i = 1; i < f.length; i++) {
            v[i - 1] = Double.parseDouble(f[i]);
          }
          map.put(f[0], v);
        }
      }
      return cases;
    } catch (IOException e) {
      throw new UncheckedIOException(e);
    }
  }
}
