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
      if (id != null) {
        EventRecord e = store.event(sample, id).orElseThrow(() -> new InputException(index,
            "sample '" + sample + "' has no event with id " + id));
        events.add(e);
        o.say("event %d of %s (row %d, input line %d), weight %s", id, sample, e.row(), e.line(), e.weight());
        e.numbers().forEach((k, v) -> o.say("  %-20s %s", k, v));
        e.categories().forEach((k, v) -> o.say("  %-20s %s", k, v));
      } else {
        String order = by != null ? by : latestScore(m, "give --by COLUMN, or fit a model first (triage fit)");
        Selection selection = where == null ? Selection.all() : store.where(where);
        BitSet mask = store.mask(selection, sample);
        String idColumn = m.spec().columns().id();
        double[][] cols = store.columns(sample, List.of(order, idColumn));
        Integer[] picked = mask.stream().boxed().toArray(Integer[]::new);
        java.util.Arrays.sort(picked, (a, b) -> Double.compare(cols[0][b], cols[0][a]));
        o.say("%d events of %s in the selection; the top %d by %s:", picked.length, sample,
            Math.min(top, picked.length), order);
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
        for (int k = 0; k < Math.min(top, picked.length); k++) {
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
      result.put("events", events);
      o.result(result);
    }
    return ExitCodes.OK;
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
