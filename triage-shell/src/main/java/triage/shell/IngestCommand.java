package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.BadRowPolicy;
import triage.core.sample.Columns;
import triage.core.sample.ReadOptions;
import triage.core.sample.ReadResult;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.Variation;
import triage.core.sample.WeightPolicy;
import triage.index.Ingest;
import triage.index.IngestReport;

/** {@code triage ingest}: reads samples into a new event index. */
@Command(name = "ingest", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Read the samples of an analysis (CSV or TSV, plain or gzip) into a new event index.",
        "Every row is checked; with the default --on-bad-row fail the first bad row stops the ingest and nothing "
            + "is written. The index becomes visible only when every file has been read."},
    footer = ExitCodes.FOOTER, sortOptions = false)
public final class IngestCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder to create.")
  Path index;

  /** The sample spec, or the flags below. */
  @ArgGroup(exclusive = true, multiplicity = "1", heading = "%nInputs (a spec file, or flags for the common case):%n")
  Inputs inputs;

  /** Inputs: a spec file or flags. */
  static final class Inputs {
    /** The sample spec file. */
    @Option(names = "--spec", paramLabel = "FILE", description = "Sample spec (JSON, see docs/sample-spec.md).")
    Path specFile;

    /** Flags describing the samples. */
    @ArgGroup(exclusive = false)
    Flags flags;
  }

  /** Flags for the common case of one reference and one observed file. */
  static final class Flags {
    /** Reference file. */
    @Option(names = "--reference", required = true, paramLabel = "FILE", description = "Reference sample file.")
    Path reference;

    /** Observed file. */
    @Option(names = "--observed", required = true, paramLabel = "FILE", description = "Observed sample file.")
    Path observed;

    /** Follow-up reference file. */
    @Option(names = "--followup-reference", paramLabel = "FILE", description = "Follow-up reference file.")
    Path followupReference;

    /** Follow-up observed file. */
    @Option(names = "--followup-observed", paramLabel = "FILE", description = "Follow-up observed file.")
    Path followupObserved;

    /** Feature columns. */
    @Option(names = "--features", required = true, split = ",", paramLabel = "COL,...",
        description = "Numeric feature columns (the ratio model's inputs).")
    List<String> features;

    /** Event id column. */
    @Option(names = "--id", defaultValue = "event", paramLabel = "COL",
        description = "Integer event id column (default: ${DEFAULT-VALUE}).")
    String id;

    /** Weight column. */
    @Option(names = "--weight", paramLabel = "COL",
        description = "Weight column of reference files (without it every event weighs one).")
    String weight;

    /** Run column. */
    @Option(names = "--run", paramLabel = "COL", description = "Run number column.")
    String run;

    /** Block column. */
    @Option(names = "--block", paramLabel = "COL", description = "Luminosity block column.")
    String block;

    /** Category columns. */
    @Option(names = "--category", split = ",", paramLabel = "COL",
        description = "Categorical bookkeeping column(s), e.g. detector sector or trigger.")
    List<String> categories = new ArrayList<>();

    /** Variations. */
    @Option(names = "--variation", paramLabel = "NAME:UP:DOWN",
        description = "A systematic variation: name and its up and down weight columns (repeatable).")
    List<String> variations = new ArrayList<>();

    /** External score column. */
    @Option(names = "--score", paramLabel = "COL", description = "Per-event score from your own model.")
    String score;
  }

  /** Bad-row policy. */
  @Option(names = "--on-bad-row", defaultValue = "fail", paramLabel = "fail|skip",
      description = "fail: stop at the first bad row (default); skip: set bad rows aside in the rejects file.")
  BadRowPolicy onBadRow;

  /** Rejects file. */
  @Option(names = "--rejects", paramLabel = "FILE", description = "Where skipped rows go (default: DIR/rejects.csv).")
  Path rejects;

  /** Negative weights. */
  @Option(names = "--allow-negative-weights",
      description = "Accept zero and negative reference weights (they are counted and reported).")
  boolean allowNegativeWeights;

  /** Replace an existing index. */
  @Option(names = "--replace", description = "Replace an existing index in DIR (it stays readable until done).")
  boolean replace;

  /** Indexing threads. */
  @Option(names = "--threads", defaultValue = "2", paramLabel = "N",
      description = "Indexing threads (default: ${DEFAULT-VALUE}).")
  int threads;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    SampleSpec sampleSpec = inputs.specFile != null ? SampleSpec.read(inputs.specFile) : fromFlags(inputs.flags);
    java.util.Map<triage.core.sample.Role, String> firstOfRole = new java.util.EnumMap<>(triage.core.sample.Role.class);
    for (var s : sampleSpec.samples()) {
      String first = firstOfRole.putIfAbsent(s.role(), s.name());
      if (first != null) {
        o.note("note: sample '%s' has the role %s of sample '%s'; the commands use '%s' for that role, and '%s' "
            + "only where it is named (e.g. calibrate --inject-sample %s)", s.name(), s.role().label(), first, first,
            s.name(), s.name());
      }
    }
    if (threads < 1 || threads > 1024) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--threads must be between 1 and 1024");
    }
    if (index.toString().isBlank()) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--index needs a folder name");
    }
    ReadOptions read = ReadOptions.strict().with(onBadRow)
        .with(allowNegativeWeights ? WeightPolicy.ANY_FINITE : WeightPolicy.POSITIVE);
    Ingest.Options options = Ingest.Options.defaults().with(read).withReplace(replace).withRejectsFile(rejects)
        .withThreads(threads);
    IngestReport report = Ingest.run(sampleSpec, index, options, line -> o.note(line));
    for (ReadResult r : report.samples()) {
      o.say("%-20s %10d read %10d indexed %8d rejected   Σw = %.6g", r.sample(), r.rowsRead(), r.rowsAccepted(),
          r.rowsRejected(), r.sumOfWeights());
      if (r.negativeWeights() > 0 || r.zeroWeights() > 0) {
        o.say("%-20s %d negative and %d zero weights accepted", "", r.negativeWeights(), r.zeroWeights());
      }
      if (!r.ignoredColumns().isEmpty()) {
        o.say("%-20s columns not in the spec, not kept: %s", "", String.join(", ", r.ignoredColumns()));
      }
    }
    o.say("total                %10d read %10d indexed %8d rejected   (%.1f s, %.0f events/s)", report.rowsRead(),
        report.rowsIndexed(), report.rowsRejected(), report.seconds(), report.rowsRead() / report.seconds());
    if (report.rejectsFile() != null) {
      o.say("rejected rows and their reasons: %s", report.rejectsFile());
    }
    o.say("index %s ready; see it with: triage info --index %s", report.index(), report.index());
    o.result(json(report));
    return ExitCodes.OK;
  }

  /** The JSON result (fields documented in docs/json.md). */
  static Map<String, Object> json(IngestReport report) {
    Map<String, Object> m = new LinkedHashMap<>();
    m.put("command", "ingest");
    m.put("tool", "triage " + ToolVersion.get());
    m.put("index", report.index());
    m.put("indexId", report.indexId());
    m.put("rowsRead", report.rowsRead());
    m.put("rowsIndexed", report.rowsIndexed());
    m.put("rowsRejected", report.rowsRejected());
    m.put("rejectsFile", report.rejectsFile());
    m.put("seconds", report.seconds());
    List<Map<String, Object>> samples = new ArrayList<>();
    for (ReadResult r : report.samples()) {
      Map<String, Object> s = new LinkedHashMap<>();
      s.put("name", r.sample());
      s.put("file", r.file());
      s.put("sha256", r.sha256());
      s.put("compressed", r.compressed());
      s.put("delimiter", String.valueOf(r.delimiter()));
      s.put("rowsRead", r.rowsRead());
      s.put("rowsIndexed", r.rowsAccepted());
      s.put("rowsRejected", r.rowsRejected());
      s.put("rejectedByKind", r.rejectedByKind());
      s.put("negativeWeights", r.negativeWeights());
      s.put("zeroWeights", r.zeroWeights());
      s.put("sumOfWeights", r.sumOfWeights());
      s.put("sumOfSquaredWeights", r.sumOfSquaredWeights());
      s.put("ignoredColumns", r.ignoredColumns());
      samples.add(s);
    }
    m.put("samples", samples);
    return m;
  }

  private SampleSpec fromFlags(Flags f) {
    try {
      List<Variation> variations = new ArrayList<>();
      for (String v : f.variations) {
        String[] parts = v.split(":", -1);
        if (parts.length != 3) {
          throw new CommandLine.ParameterException(spec.commandLine(),
              "--variation '" + v + "' must be NAME:UP_COLUMN:DOWN_COLUMN");
        }
        variations.add(new Variation(parts[0], parts[1], parts[2]));
      }
      Columns columns = new Columns(f.features, f.id, f.run, f.block, f.categories, f.score);
      List<SampleSource> samples = new ArrayList<>();
      samples.add(new SampleSource(null, Role.REFERENCE, f.reference.toString(), f.weight));
      samples.add(new SampleSource(null, Role.OBSERVED, f.observed.toString(), null));
      if (f.followupReference != null) {
        samples.add(new SampleSource(null, Role.FOLLOWUP_REFERENCE, f.followupReference.toString(), f.weight));
      }
      if (f.followupObserved != null) {
        samples.add(new SampleSource(null, Role.FOLLOWUP_OBSERVED, f.followupObserved.toString(), null));
      }
      return new SampleSpec(SampleSpec.FORMAT, columns, variations, samples);
    } catch (IllegalArgumentException e) {
      throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
    }
  }
}
