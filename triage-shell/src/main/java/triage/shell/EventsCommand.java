package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.InputException;
import triage.index.EventRecord;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.Selection;

/** {@code triage events}: the top events of a selection, or one event in full. */
@Command(name = "events", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"List a sample's events in a selection, largest value of a column first (by default the latest "
        + "model's score), or show one event in full with --id."},
    footer = ExitCodes.FOOTER)
public final class EventsCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Sample. */
  @Option(names = "--sample", defaultValue = "observed", paramLabel = "NAME",
      description = "The sample (default: ${DEFAULT-VALUE}).")
  String sample;

  /** Condition. */
  @Option(names = "--where", paramLabel = "CONDITION", description = "The selection (default: every event).")
  String where;

  /** Order. */
  @Option(names = "--by", paramLabel = "COL", description = "Order by this column, largest first (default: the "
      + "latest model's score).")
  String by;

  /** Count. */
  @Option(names = "--top", defaultValue = "10", paramLabel = "N", description = "How many (default: ${DEFAULT-VALUE}).")
  int top;

  /** One event. */
  @Option(names = "--id", paramLabel = "ID", description = "Show this event in full instead.")
  Long id;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    if (top < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--top must be at least 1");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      if (m.sample(sample) == null) {
        throw new InputException(index, "has no sample '" + sample + "'");
      }
      List<EventRecord> events = new ArrayList<>();
      Map<String, Map<String, Double>> gradients = null;
      String order = null;
      long selected = 1;
      if (id != null) {
        EventRecord e = store.event(sample, id).orElseThrow(() -> new InputException(index,
            "sample '" + sample + "' has no event with id " + id));
        events.add(e);
        o.say("event %d of %s (row %d, input line %d), weight %s", id, sample, e.row(), e.line(), e.weight());
        e.numbers().forEach((k, v) -> o.say("  %-20s %s", k, plain(v)));
        e.categories().forEach((k, v) -> o.say("  %-20s %s", k, v));
        gradients = gradients(o, m, e);
        gradients.forEach((version, g) -> {
          if (g != null) {
            o.say("  ∂f/∂x of model %s at this event, in the features' own units (signed; the score rises with a "
                + "feature where positive):", version);
            g.forEach((k, v) -> o.say("    %-18s %s", k, plain(v)));
          }
        });
      } else {
        order = by != null ? by : latestScore(m, "give --by COLUMN, or fit a model first (triage fit)");
        Selection selection = where == null ? Selection.all() : store.where(where);
        BitSet mask = store.mask(selection, sample);
        String idColumn = m.spec().columns().id();
        double[][] cols = store.columns(sample, List.of(order, idColumn));
        int[] picked = topRows(mask, cols[0], top);
        selected = mask.cardinality();
        o.say("%d events of %s in the selection; the top %d by %s:", selected, sample, picked.length, order);
        List<String> features = m.spec().columns().features();
        StringBuilder header = new StringBuilder(String.format(java.util.Locale.ROOT, "  %12s %12s", idColumn,
            order));
        for (String f : features) {
          header.append(String.format(java.util.Locale.ROOT, " %10s", f.length() > 10 ? f.substring(0, 10) : f));
        }
        for (String c : m.spec().columns().categories()) {
          header.append(' ').append(c);
        }
        o.say("%s", header);
        for (int k = 0; k < picked.length; k++) {
          EventRecord e = store.event(sample, (long) cols[1][picked[k]]).orElseThrow();
          events.add(e);
          StringBuilder line = new StringBuilder(String.format(java.util.Locale.ROOT, "  %12d %12.5g",
              (long) cols[1][picked[k]], cols[0][picked[k]]));
          for (String f : features) {
            line.append(String.format(java.util.Locale.ROOT, " %10.4g", e.numbers().get(f)));
          }
          for (String c : m.spec().columns().categories()) {
            line.append(' ').append(e.categories().get(c));
          }
          o.say("%s", line);
        }
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "events");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("sample", sample);
      result.put("where", id != null ? null : where);
      result.put("orderBy", order);
      result.put("selected", selected);
      result.put("events", events);
      result.put("gradients", gradients);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /**
   * The rows of the {@code k} largest values among the set bits of {@code mask}, largest first; ties in row order
   * (the order a stable sort gives). A bounded heap: O(n log k) time and O(k) memory, no boxing, whatever the
   * selection's size.
   */
  static int[] topRows(BitSet mask, double[] values, int k) {
    int n = Math.min(k, mask.cardinality());
    int[] heap = new int[n]; // a min-heap of the kept rows under "ranks below"
    int size = 0;
    for (int row = mask.nextSetBit(0); row >= 0; row = mask.nextSetBit(row + 1)) {
      if (size < n) {
        heap[size] = row;
        int c = size++;
        while (c > 0 && below(values, heap[c], heap[(c - 1) / 2])) {
          swap(heap, c, (c - 1) / 2);
          c = (c - 1) / 2;
        }
      } else if (n > 0 && below(values, heap[0], row)) {
        heap[0] = row;
        int p = 0;
        while (true) {
          int l = 2 * p + 1;
          int low = p;
          if (l < size && below(values, heap[l], heap[low])) {
            low = l;
          }
          if (l + 1 < size && below(values, heap[l + 1], heap[low])) {
            low = l + 1;
          }
          if (low == p) {
            break;
          }
          swap(heap, p, low);
          p = low;
        }
      }
    }
    // Sort the kept rows, largest first (k is small).
    Integer[] kept = new Integer[size];
    for (int i = 0; i < size; i++) {
      kept[i] = heap[i];
    }
    java.util.Arrays.sort(kept, (a, b) -> below(values, a, b) ? 1 : below(values, b, a) ? -1 : 0);
    int[] out = new int[size];
    for (int i = 0; i < size; i++) {
      out[i] = kept[i];
    }
    return out;
  }

  /** Whether row a ranks below row b: a smaller value, or an equal one later in row order. */
  private static boolean below(double[] values, int a, int b) {
    int c = Double.compare(values[a], values[b]);
    return c < 0 || (c == 0 && a > b);
  }

  private static void swap(int[] a, int i, int j) {
    int t = a[i];
    a[i] = a[j];
    a[j] = t;
  }

  /** A value as text: whole numbers (ids, runs, blocks, counts) without a trailing ".0", others as read back. */
  static String plain(double v) {
    return v == Math.rint(v) && Math.abs(v) <= 0x1p53 ? Long.toString((long) v) : Double.toString(v);
  }

  /**
   * For every fitted model of the index (not an external score, which has no model to differentiate), ∂f/∂x_k at
   * this event in the features' original units, by model version and feature; null, with a note, for a model whose
   * file cannot be read or whose features the event lacks (the event is shown all the same).
   */
  private Map<String, Map<String, Double>> gradients(Output o, Manifest m, EventRecord e) throws java.io.IOException {
    Map<String, Map<String, Double>> out = new LinkedHashMap<>();
    for (Manifest.Model mm : m.models()) {
      if (mm.modelFile() == null) {
        continue;
      }
      triage.core.ratio.RatioModel model;
      try {
        model = ModelFiles.load(index, mm);
      } catch (InputException | java.io.IOException problem) {
        o.note("note: no ∂f/∂x for model %s: %s", mm.version(), problem.getMessage());
        out.put(mm.version(), null);
        continue;
      }
      List<String> names = model.featureNames();
      double[] x = new double[names.size()];
      String lacking = null;
      for (int k = 0; k < x.length && lacking == null; k++) {
        Double v = e.numbers().get(names.get(k));
        if (v == null) {
          lacking = names.get(k);
        } else {
          x[k] = v;
        }
      }
      if (lacking != null) {
        o.note("note: no ∂f/∂x for model %s: it needs feature '%s', which this event lacks", mm.version(), lacking);
        out.put(mm.version(), null);
        continue;
      }
      double[] g = model.gradient(x);
      Map<String, Double> byFeature = new LinkedHashMap<>();
      for (int k = 0; k < x.length; k++) {
        byFeature.put(names.get(k), g[k]);
      }
      out.put(mm.version(), byFeature);
    }
    return out;
  }

  /** The latest model's score column; with no model, an input error that says what to do instead. */
  static String latestScore(Manifest m, String otherwise) {
    String last = null;
    for (Manifest.Model mm : m.models()) {
      last = "score:" + mm.version();
    }
    if (last == null) {
      throw new InputException(null, "no model scores yet: " + otherwise);
    }
    return last;
  }
}
