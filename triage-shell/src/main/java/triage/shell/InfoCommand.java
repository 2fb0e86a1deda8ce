package triage.shell;

import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.ScaleShift;
import triage.core.sample.Variation;
import triage.index.EventStore;
import triage.index.Manifest;

/** {@code triage info}: what an index holds. */
@Command(name = "info", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = "Summarise an event index: samples, counts, weight sums, columns, models and scores.",
    footer = ExitCodes.FOOTER)
public final class InfoCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      o.say("index      %s", index);
      o.say("id         %s   (format %s, written by %s at %s)", m.indexId(), m.format(), m.tool(), m.created());
      o.say("");
      o.say("%-20s %-19s %12s %14s %12s %8s", "sample", "role", "events", "Σw", "√Σw²", "rejected");
      for (Manifest.Sample s : m.samples()) {
        o.say("%-20s %-19s %12d %14.6g %12.4g %8d", s.name(), s.role(), s.events(), s.sumOfWeights(),
            Math.sqrt(s.sumOfSquaredWeights()), s.rowsRejected());
        if (s.negativeWeights() > 0 || s.zeroWeights() > 0) {
          o.say("%-20s %d negative, %d zero weights", "", s.negativeWeights(), s.zeroWeights());
        }
      }
      o.say("");
      o.say("features   %s", String.join(", ", m.spec().columns().features()));
      var c = m.spec().columns();
      StringBuilder books = new StringBuilder("id " + c.id());
      if (c.run() != null) {
        books.append(", run ").append(c.run());
      }
      if (c.block() != null) {
        books.append(", block ").append(c.block());
      }
      for (String k : c.categories()) {
        books.append(", category ").append(k);
      }
      o.say("bookkeeping %s", books);
      for (Variation v : m.spec().variations()) {
        o.say("variation  %s (up %s, down %s)", v.name(), v.up(), v.down());
      }
      for (ScaleShift sh : m.spec().scales()) {
        o.say("scale      %s (%s scaled by 1 ± %s)", sh.name(), String.join(", ", sh.features()), sh.relative());
      }
      if (m.models().isEmpty()) {
        o.say("models     none yet (fit one with 'triage fit', or name a score column in the spec)");
      }
      for (Manifest.Model model : m.models()) {
        o.say("model      %s: scores from %s, column score:%s, added %s", model.version(),
            "column".equals(model.source()) ? "the input column " + c.score() : model.scoreFile(), model.version(),
            model.created());
      }
      o.say("inputs");
      for (Manifest.Sample s : m.samples()) {
        o.say("  %-18s %s  sha256 %s", s.name(), s.file(), s.sha256());
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "info");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("manifest", m);
      o.result(result);
    }
    return ExitCodes.OK;
  }
}
