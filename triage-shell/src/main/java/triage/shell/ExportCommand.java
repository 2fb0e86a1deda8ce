package triage.shell;

import java.io.BufferedWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVPrinter;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.Fingerprints;
import triage.core.provenance.ToolVersion;
import triage.core.sample.InputException;
import triage.index.ColumnKind;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.Selection;

/** {@code triage export}: a selection's events as CSV. */
@Command(name = "export", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Write a sample's selected events as CSV: every column, the weight, the variation weights and "
        + "every model's score (doubles written so that they read back exactly)."},
    footer = ExitCodes.FOOTER)
public final class ExportCommand implements Callable<Integer> {
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

  /** Output. */
  @Option(names = "--out", required = true, paramLabel = "FILE", description = "The CSV file to write.")
  Path out;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Output.prepareFile(out);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Manifest.Sample facts = m.sample(sample);
      if (facts == null) {
        throw new InputException(index, "has no sample '" + sample + "'");
      }
      Selection selection = where == null ? Selection.all() : store.where(where);
      BitSet mask = store.mask(selection, sample);
      List<String> numeric = new ArrayList<>();
      List<String> categories = new ArrayList<>();
      for (Manifest.Column c : m.columns()) {
        (c.kind() == ColumnKind.CATEGORY ? categories : numeric).add(c.name());
      }
      if (facts.role().weighted()) {
        for (var v : m.spec().variations()) {
          numeric.add(v.up());
          numeric.add(v.down());
        }
      }
      for (Manifest.Model mm : m.models()) {
        if (!"column".equals(mm.source())) {
          numeric.add("score:" + mm.version());
        }
      }
      double[][] values = store.columns(sample, numeric);
      double[] weights = store.weights(sample);
      String[][] cats = new String[categories.size()][];
      for (int k = 0; k < cats.length; k++) {
        cats[k] = store.categories(sample, categories.get(k));
      }
      List<String> header = new ArrayList<>(numeric);
      header.addAll(categories);
      header.add("weight");
      long written = 0;
      try (BufferedWriter w = Files.newBufferedWriter(out, StandardCharsets.UTF_8);
          CSVPrinter p = new CSVPrinter(w, CSVFormat.DEFAULT.builder().setHeader(header.toArray(String[]::new))
              .get())) {
        List<Object> row = new ArrayList<>(header.size());
        for (int i = mask.nextSetBit(0); i >= 0; i = mask.nextSetBit(i + 1)) {
          row.clear();
          for (int k = 0; k < numeric.size(); k++) {
            Manifest.Column c = m.column(numeric.get(k));
            double v = values[k][i];
            row.add(c != null && c.kind().integral() ? Long.toString((long) v) : Double.toString(v));
          }
          for (String[] c : cats) {
            row.add(c[i]);
          }
          row.add(Double.toString(weights[i]));
          p.printRecord(row);
          written++;
        }
      }
      o.say("wrote %d events of %s to %s", written, sample, out);
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "export");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("sample", sample);
      result.put("where", where);
      result.put("file", out.toString());
      result.put("sha256", Fingerprints.sha256(out));
      result.put("events", written);
      result.put("columns", header);
      o.result(result);
    }
    return ExitCodes.OK;
  }
}
