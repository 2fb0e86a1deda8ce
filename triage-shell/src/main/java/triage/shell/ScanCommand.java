package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.inference.CountingSignificance;
import triage.core.region.ThresholdScan;
import triage.core.provenance.ToolVersion;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;

/** {@code triage scan}: observed against expected above a sequence of score thresholds. */
@Command(name = "scan", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Scan thresholds c on a model's score f: for f > c the observed count, the expected reference "
        + "yield with its MC error, the excess and the local Z_Bi. Thresholds are the observed sample's score "
        + "quantiles. Every line is a local significance, and the best line of a scan is biased upwards."},
    footer = ExitCodes.FOOTER)
public final class ScanCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Model. */
  @Option(names = "--model", paramLabel = "VERSION", description = "Model version (default: the latest).")
  String model;

  /** Steps. */
  @Option(names = "--steps", defaultValue = "15", paramLabel = "N", description = "Thresholds (default: ${DEFAULT-VALUE}).")
  int steps;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    if (steps < 1 || steps > 1000) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--steps must be between 1 and 1000");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      String column = model != null ? "score:" + model
          : EventsCommand.latestScore(m, "fit a model first (triage fit)");
      String observed = m.samples().get(Roles.ordinal(m, Role.OBSERVED)).name();
      String reference = m.samples().get(Roles.ordinal(m, Role.REFERENCE)).name();
      double[] f = store.columns(observed, List.of(column))[0];
      EventStore.SelectedRows ref = store.rows(reference, List.of(column), triage.index.Selection.all());
      o.say("%-12s %9s %12s %10s %10s %8s", "f > c", "observed", "expected", "MC error", "excess", "local Z");
      List<Map<String, Object>> rows = new ArrayList<>();
      Map<String, List<ThresholdScan.Row>> without = new LinkedHashMap<>();
      for (ThresholdScan.Row r : ThresholdScan.scan(f, ref.columns()[0], ref.weights(), steps)) {
        double b = r.expected();
        double err = r.expectedError();
        long n = r.observed();
        String reason = r.noSignificance();
        double z = reason == null ? CountingSignificance.zBiFromBackground(n, b, err).z() : Double.NaN;
        if (reason != null) {
          without.computeIfAbsent(reason, k -> new ArrayList<>()).add(r);
        }
        o.say("%-12.5g %9d %12.5g %10.3g %10.4g %8s", r.threshold(), n, b, err, n - b, reason == null
            ? String.format(java.util.Locale.ROOT, "%.2f", z) : "-");
        Map<String, Object> row = new LinkedHashMap<>();
        row.put("threshold", r.threshold());
        row.put("observed", n);
        row.put("expected", b);
        row.put("expectedStatError", err);
        row.put("excess", n - b);
        row.put("localZBi", z);
        row.put("noSignificance", reason);
        rows.add(row);
      }
      List<String> notes = new ArrayList<>();
      for (var e : without.entrySet()) {
        List<ThresholdScan.Row> rs = e.getValue();
        ThresholdScan.Row first = rs.get(0);
        ThresholdScan.Row last = rs.get(rs.size() - 1);
        String where = rs.size() == 1
            ? String.format(java.util.Locale.ROOT, "f > %.5g (%d observed events)", first.threshold(), first.observed())
            : String.format(java.util.Locale.ROOT, "%d thresholds, f > %.5g … %.5g (%d … %d observed events)",
                rs.size(), first.threshold(), last.threshold(), first.observed(), last.observed());
        notes.add(String.format(java.util.Locale.ROOT, "local Z '-' at %s: %s; no significance can be given%s",
            where, e.getKey(), first.expectedError() > 0 ? "" : String.format(java.util.Locale.ROOT, ". The "
            + "reference has no events with scores this high: look at those events themselves (triage events "
            + "--where \"%s > %.5g\")", column, first.threshold())));
      }
      for (String note : notes) {
        o.say("note: %s", note);
      }
      o.say("note: local significances; the best threshold of a scan is biased upwards and a region chosen here "
          + "must be confirmed on independent data (triage region, then triage followup).");
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "scan");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("column", column);
      result.put("rows", rows);
      result.put("notes", notes);
      result.put("cautions", SelectCommand.CAUTIONS);
      o.result(result);
    }
    return ExitCodes.OK;
  }
}
