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
import triage.core.provenance.ToolVersion;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;

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
      String column = model != null ? "score:" + model : EventsCommand.latestScore(m);
      String observed = m.samples().get(Roles.ordinal(m, Role.OBSERVED)).name();
      double[] f = store.columns(observed, List.of(column))[0].clone();
      java.util.Arrays.sort(f);
      o.say("%-12s %9s %12s %10s %10s %8s", "f > c", "observed", "expected", "MC error", "excess", "local Z");
      List<Map<String, Object>> rows = new ArrayList<>();
      for (int k = 0; k < steps; k++) {
        // Quantiles from the median up to the top 1%: q = 0.5 + 0.49·k/(steps − 1).
        double q = steps == 1 ? 0.5 : 0.5 + 0.49 * k / (steps - 1);
        double c = f[Math.min(f.length - 1, (int) (q * f.length))];
        List<SampleSums> sums = store.sums(store.where(column + " > " + c));
        SampleSums n = sums.get(Roles.ordinal(m, Role.OBSERVED));
        SampleSums b = sums.get(Roles.ordinal(m, Role.REFERENCE));
        double z = b.sumOfWeights() > 0 && b.statisticalError() > 0
            ? CountingSignificance.zBiFromBackground(n.count(), b.sumOfWeights(), b.statisticalError()).z()
            : Double.NaN;
        o.say("%-12.5g %9d %12.5g %10.3g %10.4g %8.2f", c, n.count(), b.sumOfWeights(), b.statisticalError(),
            n.count() - b.sumOfWeights(), z);
        Map<String, Object> row = new LinkedHashMap<>();
        row.put("threshold", c);
        row.put("observed", n.count());
        row.put("expected", b.sumOfWeights());
        row.put("expectedStatError", b.statisticalError());
        row.put("excess", n.count() - b.sumOfWeights());
        row.put("localZBi", z);
        rows.add(row);
      }
      o.say("note: local significances; the best threshold of a scan is biased upwards and a region chosen here "
          + "must be confirmed on independent data (triage region, then triage followup).");
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "scan");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("column", column);
      result.put("rows", rows);
      result.put("cautions", SelectCommand.CAUTIONS);
      o.result(result);
    }
    return ExitCodes.OK;
  }
}
