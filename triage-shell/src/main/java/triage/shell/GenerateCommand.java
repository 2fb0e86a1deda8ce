package triage.shell;

import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.examples.DemoScenario;

/** {@code triage generate}: writes the demo scenario's samples. */
@Command(name = "generate", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Write the demo scenario: photon-plus-jet samples at a fictional collider, with a spec and the "
        + "truth of what was injected.", "Deterministic from the seed."},
    footer = ExitCodes.FOOTER)
public final class GenerateCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Output folder. */
  @Option(names = "--out", required = true, paramLabel = "DIR", description = "Folder for the samples.")
  Path out;

  /** Size. */
  @Option(names = "--size", defaultValue = "standard", paramLabel = "standard|small",
      description = "standard: 200,000 reference and about 20,000 observed events; small: a tenth of that.")
  Size size;

  /** Seed. */
  @Option(names = "--seed", paramLabel = "N", description = "Seed of every draw (default: the scenario's own).")
  Long seed;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** Scenario sizes. */
  enum Size {
    /** The full demo. */
    standard,
    /** A tenth of it. */
    small
  }

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Output.prepareFolder(out);
    DemoScenario.Settings s = size == Size.small ? DemoScenario.Settings.small() : DemoScenario.Settings.standard();
    if (seed != null) {
      s = new DemoScenario.Settings(seed, s.referenceEvents(), s.expectedBackground(), s.signalEvents(),
          s.artefactEvents());
    }
    DemoScenario.Written w = DemoScenario.write(out, s);
    o.say("wrote the demo samples to %s (seed %d); spec %s; truth %s", out, s.seed(), w.spec(), w.truth());
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("command", "generate");
    m.put("tool", "triage " + ToolVersion.get());
    m.put("folder", out.toString());
    m.put("spec", w.spec().toString());
    m.put("truth", w.truth().toString());
    m.put("settings", s);
    o.result(m);
    return ExitCodes.OK;
  }
}
