package triage.shell;

import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.ReadOptions;
import triage.examples.DemoScenario;
import triage.index.Ingest;
import triage.index.IngestReport;

/** {@code triage demo}: the main job on built-in demo data. */
@Command(name = "demo", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Run the job on built-in demo data: generate the fictional photon-plus-jet samples, ingest them "
        + "into an event index, fit the ratio model, select the events where the observed density is at least "
        + "three times the reference's, rank the variables that set them apart, check the suspect detector sector, "
        + "freeze a region for the resonance and follow it up on the independent samples.",
        "(Calibration and the report join as they are built.)"},
    footer = ExitCodes.FOOTER)
public final class DemoCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Output folder. */
  @Option(names = "--out", defaultValue = "triage-demo", paramLabel = "DIR",
      description = "Folder for samples and index (default: ${DEFAULT-VALUE}).")
  Path out;

  /** Small scenario. */
  @Option(names = "--small", description = "Use the small scenario (a tenth of the events).")
  boolean small;

  /** Fit iteration cap. */
  @Option(names = "--max-iterations", defaultValue = "1500", paramLabel = "N",
      description = "Iteration cap of the demo's fit (default: ${DEFAULT-VALUE}).")
  int maxIterations;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    long start = System.nanoTime();
    DemoScenario.Settings s = small ? DemoScenario.Settings.small() : DemoScenario.Settings.standard();
    Path samples = out.resolve("samples");
    Path index = out.resolve("index");
    o.note("[1/7] generating the demo samples in %s (seed %d)", samples, s.seed());
    DemoScenario.Written w = DemoScenario.write(samples, s);
    o.note("[2/7] ingesting into %s", index);
    IngestReport report = Ingest.run(w.sampleSpec(), index,
        Ingest.Options.defaults().with(ReadOptions.strict()).withReplace(true), line -> o.note("      " + line));
    java.io.PrintWriter human = json ? spec.commandLine().getErr() : spec.commandLine().getOut();
    java.io.PrintWriter err = spec.commandLine().getErr();
    o.note("[3/7] summary");
    int code = Main.run(new String[] {"info", "--index", index.toString()}, human, err);
    o.note("[4/7] fitting the ratio model (iteration cap %d)", maxIterations);
    code = Math.max(code, Main.run(new String[] {"fit", "--index", index.toString(), "--max-iterations",
        String.valueOf(maxIterations)}, human, err));
    String where = "score:m1 > " + Math.log(3);
    o.note("[5/7] the events with f > log 3, and what sets them apart");
    code = Math.max(code, Main.run(new String[] {"select", "--index", index.toString(), "--where", where}, human,
        err));
    code = Math.max(code, Main.run(new String[] {"rank", "--index", index.toString(), "--where", where,
        "--permutations", "100"}, human, err));
    o.note("[6/7] is it a few runs or one detector sector? (a real effect is spread over both)");
    code = Math.max(code, Main.run(new String[] {"breakdown", "--index", index.toString(), "--where", where, "--by",
        "run", "--top", "5"}, human, err));
    code = Math.max(code, Main.run(new String[] {"breakdown", "--index", index.toString(), "--where", where, "--by",
        "sector", "--top", "5"}, human, err));
    String resonance = "m_gj BETWEEN 700 AND 800 AND NOT (sector = '" + DemoScenario.NOISY_SECTOR
        + "' AND met > 60)";
    Path region = out.resolve("resonance-region.json");
    o.note("[7/7] freezing a region for the bump in m_gj and following it up on the independent samples");
    code = Math.max(code, Main.run(new String[] {"region", "--index", index.toString(), "--where", resonance,
        "--name", "photon-jet resonance", "--out", region.toString()}, human, err));
    code = Math.max(code, Main.run(new String[] {"followup", "--region", region.toString(), "--spec",
        w.spec().toString()}, human, err));
    double seconds = (System.nanoTime() - start) / 1e9;
    o.say("");
    o.say("demo done in %.1f s. Look further with, for example:", seconds);
    o.say("  triage select --index %s --where \"score:m1 > 1 AND sector = '11'\"", index);
    o.say("  triage rank --index %s --where \"m_gj BETWEEN 700 AND 800\"", index);
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("command", "demo");
    m.put("tool", "triage " + ToolVersion.get());
    m.put("samples", samples.toString());
    m.put("index", index.toString());
    m.put("seed", s.seed());
    m.put("ingest", IngestCommand.json(report));
    m.put("seconds", seconds);
    o.result(m);
    return code;
  }
}
