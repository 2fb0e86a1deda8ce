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
        + "into an event index and summarise it.",
        "(Fitting, calibration, drill-down, region and follow-up steps join as they are built.)"},
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
    o.note("[1/3] generating the demo samples in %s (seed %d)", samples, s.seed());
    DemoScenario.Written w = DemoScenario.write(samples, s);
    o.note("[2/3] ingesting into %s", index);
    IngestReport report = Ingest.run(w.sampleSpec(), index,
        Ingest.Options.defaults().with(ReadOptions.strict()).withReplace(true), line -> o.note("      " + line));
    o.note("[3/3] summary");
    int code = Main.run(new String[] {"info", "--index", index.toString()}, json
        ? spec.commandLine().getErr() : spec.commandLine().getOut(), spec.commandLine().getErr());
    double seconds = (System.nanoTime() - start) / 1e9;
    o.say("");
    o.say("demo done in %.1f s. Next: triage info --index %s", seconds, index);
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
