package triage.shell;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.TreeMap;
import java.util.concurrent.Callable;
import java.util.stream.Stream;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.calibration.Calibration;
import triage.core.calibration.ToyLog;
import triage.core.provenance.Fingerprints;
import triage.core.provenance.ToolVersion;
import triage.core.ratio.FitSettings;
import triage.core.ratio.RatioModel;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;

/** {@code triage calibrate}: the distribution of t without signal, from toys, and the p-value of the data. */
@Command(name = "calibrate", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Calibrate a model version's test statistic with toys: each toy draws a Poisson number of events "
        + "(mean: the expected count) from the reference, with probability proportional to weight and without "
        + "replacement, keeps the rest as its reference, and is fitted exactly like the data. Finished toys are "
        + "kept in DIR/toys/VERSION/ as they finish, so an interrupted run continues where it stopped; --shard "
        + "i/n runs a disjoint slice, and every run summarises all toys of the same settings found there.",
        "Reports the empirical p-value (with its binomial error, or the bound p < 1/N), a maximum-likelihood χ² fit "
            + "to the toys, and the asymptotic p and Z from that χ² and from χ² with the parameter count."},
    footer = ExitCodes.FOOTER)
public final class CalibrateCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Toys. */
  @Option(names = "--toys", required = true, paramLabel = "N", description = "Total number of toys (all shards).")
  int toys;

  /** Model version. */
  @Option(names = "--model", paramLabel = "VERSION", description = "Model version (default: the latest fitted).")
  String version;

  /** Seed. */
  @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Run seed (default: ${DEFAULT-VALUE}).")
  long seed;

  /** Shard. */
  @Option(names = "--shard", defaultValue = "1/1", paramLabel = "i/n",
      description = "Run toys k with k mod n = i − 1 (default: ${DEFAULT-VALUE}).")
  String shard;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    String[] parts = shard.split("/");
    int si;
    int sn;
    try {
      si = Integer.parseInt(parts[0]);
      sn = Integer.parseInt(parts[1]);
    } catch (RuntimeException e) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--shard must be i/n, e.g. 2/8");
    }
    if (parts.length != 2 || sn < 1 || si < 1 || si > sn || toys < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--shard must be i/n with 1 ≤ i ≤ n, and --toys ≥ 1");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Manifest.Model mm = version != null ? m.model(version) : latest(m);
      if (mm == null || mm.modelFile() == null) {
        throw new InputException(index, "has no fitted model " + (version == null ? "(run triage fit first)"
            : "version '" + version + "'"));
      }
      RatioModel model = ModelFiles.load(index, mm);
      FitSettings settings = model.training().settings();
      double expected = model.training().expectedCount();
      double tObs = model.training().testStatistic();
      String reference = Roles.name(m, Role.REFERENCE);
      List<String> features = model.featureNames();
      double[] ref = FitCommand.featureMajor(store.columns(reference, features));
      double[] w = store.weights(reference);
      if (expected > 0.5 * w.length) {
        throw new InputException(index, String.format(java.util.Locale.ROOT, "toys draw about %.0f events from a "
            + "reference of %d without replacement; the reference must be much larger (at least twice, better ten "
            + "times) than the expected count", expected, w.length));
      }
      String fingerprint = Fingerprints.sha256((Output.JSON.writeValueAsString(settings.withThreads(1)) + "|"
          + expected + "|" + seed + "|" + m.indexId() + "|" + mm.version() + "|" + mm.sha256())
          .getBytes(java.nio.charset.StandardCharsets.UTF_8)).substring(0, 16);
      Path folder = index.resolve("toys").resolve(mm.version());
      Path file = folder.resolve("seed-" + seed + "-shard-" + si + "-of-" + sn + ".jsonl");
      TreeMap<Long, ToyLog.Entry> done = readAll(folder, seed, fingerprint);
      List<Long> todo = new ArrayList<>();
      for (long k = si - 1; k < toys; k += sn) {
        if (!done.containsKey(k)) {
          todo.add(k);
        }
      }
      o.note("model %s: t_obs = %.4f, %d parameters; %d toys already done (all shards), %d to fit in shard %s",
          mm.version(), tObs, model.parameterCount(), done.size(), todo.size(), shard);
      long start = System.nanoTime();
      int[] finished = {0};
      Calibration.run(features, ref, w, expected, settings, seed, todo.stream().mapToLong(Long::longValue).toArray(),
          e -> {
            ToyLog.append(file, fingerprint, List.of(e));
            finished[0]++;
            double elapsed = (System.nanoTime() - start) / 1e9;
            double eta = elapsed / finished[0] * (todo.size() - finished[0]);
            o.note("  toy %d: t = %.3f (%d events, %s, %.1f s)   [%d/%d, %.2f toys/min, ETA %.0f s]", e.toy(), e.t(),
                e.events(), e.converged() ? "converged" : "not converged", e.seconds(), finished[0], todo.size(),
                60 * finished[0] / elapsed, eta);
          });
      TreeMap<Long, ToyLog.Entry> all = readAll(folder, seed, fingerprint);
      double[] ts = all.values().stream().mapToDouble(ToyLog.Entry::t).toArray();
      long unconverged = all.values().stream().filter(e -> !e.converged()).count();
      Calibration.Summary s = Calibration.summarise(tObs, ts, model.parameterCount());
      o.say("model %s: t_obs = %.4f from %d toys (seed %d)", mm.version(), tObs, ts.length, seed);
      o.say("headline   %s", s.headline());
      if (s.fit() != null) {
        o.say("χ² fit     ν = %.2f ± %.2f (KS goodness of fit p = %.3g); asymptotic p = %.3g, Z = %.2f",
            s.fit().dof(), s.fit().standardError(), s.fit().ksPValue(), s.pFitted(), s.zFitted());
      }
      o.say("Wilks      χ²(%d parameters): p = %.3g, Z = %.2f", s.parameters(), s.pParameters(), s.zParameters());
      if (unconverged > 0) {
        s.warnings().add(unconverged + " of " + ts.length + " toys did not meet the stopping rule (like the data "
            + "fit, if it did not): t is understated alike in both");
      }
      for (String warning : s.warnings()) {
        o.say("warning    %s", warning);
      }
      o.say("note: this is a global p-value for the whole model-independent test, not for any selection made "
          + "afterwards; a p-value is not the probability that a signal is real.");
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "calibrate");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("model", mm.version());
      result.put("seed", seed);
      result.put("shard", shard);
      result.put("settingsFingerprint", fingerprint);
      result.put("observedT", tObs);
      result.put("toys", all.values());
      result.put("summary", s);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /** Every finished toy of this run seed and settings, over all shard files. */
  private static TreeMap<Long, ToyLog.Entry> readAll(Path folder, long seed, String fingerprint)
      throws java.io.IOException {
    TreeMap<Long, ToyLog.Entry> all = new TreeMap<>();
    if (!Files.isDirectory(folder)) {
      return all;
    }
    try (Stream<Path> files = Files.list(folder)) {
      for (Path f : files.filter(p -> p.getFileName().toString().startsWith("seed-" + seed + "-")).sorted()
          .toList()) {
        all.putAll(ToyLog.read(f, fingerprint));
      }
    }
    return all;
  }

  private static Manifest.Model latest(Manifest m) {
    Manifest.Model last = null;
    for (Manifest.Model mm : m.models()) {
      if (!"column".equals(mm.source())) {
        last = mm;
      }
    }
    return last;
  }

}
