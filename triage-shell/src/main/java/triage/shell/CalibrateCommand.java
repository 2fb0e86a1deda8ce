package triage.shell;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;
import java.util.concurrent.Callable;
import java.util.stream.Stream;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.calibration.Calibration;
import triage.core.calibration.ClipTuning;
import triage.core.calibration.Signal;
import triage.core.calibration.ToyLog;
import triage.core.calibration.ToyMerge;
import triage.core.calibration.TunedClip;
import triage.core.provenance.Fingerprints;
import triage.core.provenance.ToolVersion;
import triage.core.ratio.FitSettings;
import triage.core.ratio.RatioModel;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.shell.plot.ToyChart;

/** {@code triage calibrate}: the distribution of t without signal, from toys, and the p-value of the data. */
@Command(name = "calibrate", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    sortOptions = false,
    description = {"Calibrate a model version's test statistic with toys: each toy draws a Poisson number of events "
        + "(mean: the expected count) from the reference, with probability proportional to weight and without "
        + "replacement, keeps the rest as its reference, and is fitted exactly like the data. Finished toys are "
        + "kept in DIR/toys/VERSION/ as they finish, so an interrupted run continues where it stopped; --shard "
        + "i/n runs a disjoint slice, --merge brings in shard files made on other machines, and every run "
        + "summarises all toys of the same settings found there.",
        "Reports the empirical p-value (with its binomial error, or the bound p < 1/N), a maximum-likelihood χ² fit "
            + "to the toys, and the asymptotic p and Z from that χ² and from χ² with the parameter count, and "
            + "plots the toys' t (DIR/toys/VERSION/toys-seed-S.png and .svg unless --plot says otherwise).",
        "--tune-clip chooses the weight clip from reference-only toys over a grid of clips and iteration caps and "
            + "records it for fit --clip tuned; --inject-sample or --inject-bump with --inject-yield measures the "
            + "sensitivity to a signal (median t and median expected Z against the null toys)."},
    footer = ExitCodes.FOOTER)
public final class CalibrateCommand implements Callable<Integer> {
  /** Where the tuned clip is recorded, relative to the index. */
  static final String TUNED_CLIP = "toys/tuned-clip.json";

  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Toys. */
  @Option(names = "--toys", paramLabel = "N",
      description = "Total number of toys (all shards); with --tune-clip, toys per clip; with --inject-sample or "
          + "--inject-bump, signal toys.")
  Integer toys;

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

  /** Threads. */
  @Option(names = "--threads", paramLabel = "N",
      description = "Threads per toy fit (default: as the model was fitted; never changes results).")
  Integer threads;

  /** Plot prefix. */
  @Option(names = "--plot", paramLabel = "PREFIX|none",
      description = "Write the plot to PREFIX.png and PREFIX.svg (default: beside the toys; none: no plot).")
  String plot;

  /** Merge. */
  @Option(names = "--merge", arity = "1..*", paramLabel = "FILE",
      description = "Bring in toy files made elsewhere (shards run on copies of this index), refusing files of "
          + "other settings and toys whose t disagrees, then summarise.")
  List<Path> merge;

  /** Clip tuning. */
  @Option(names = "--tune-clip", description = "Choose the weight clip from reference-only toys (see --clips, "
      + "--caps, --plateau-tolerance) and record it in DIR/" + TUNED_CLIP + ".")
  boolean tuneClip;

  /** Clip grid. */
  @Option(names = "--clips", split = ",", defaultValue = "0.5,1,2,4,8", paramLabel = "C,...",
      description = "Clip values to try (default: ${DEFAULT-VALUE}).")
  List<Double> clips;

  /** Cap grid. */
  @Option(names = "--caps", split = ",", defaultValue = "100,300,1000,3000", paramLabel = "N,...",
      description = "Iteration caps (L-BFGS iterations, or Adam epochs), ascending (default: ${DEFAULT-VALUE}).")
  List<Integer> caps;

  /** Plateau tolerance. */
  @Option(names = "--plateau-tolerance", defaultValue = "0.05", paramLabel = "X",
      description = "A clip plateaus when the median and 97.5%% quantile of t grow by at most X (relative) from "
          + "the last-but-one to the last cap (default: ${DEFAULT-VALUE}).")
  double plateauTolerance;

  /** Injected sample. */
  @Option(names = "--inject-sample", paramLabel = "NAME",
      description = "Inject events drawn from this sample of the index (with --inject-yield).")
  String injectSample;

  /** Injected bump. */
  @Option(names = "--inject-bump", paramLabel = "FEATURE=MEAN,SIGMA",
      description = "Inject reference events whose FEATURE is replaced by a Gaussian value (with --inject-yield).")
  String injectBump;

  /** Injected yield. */
  @Option(names = "--inject-yield", paramLabel = "K", description = "Mean number of injected events per toy.")
  Double injectYield;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** What a run works on. */
  private record Context(EventStore store, Manifest manifest, Manifest.Model mm, RatioModel model,
      FitSettings settings, double expected, double tObs, String nullFingerprint, Map<String, String> nullParts,
      Path folder) {}

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    var parsed = spec.commandLine().getParseResult();
    for (String tuning : new String[] {"--clips", "--caps", "--plateau-tolerance"}) {
      if (!tuneClip && parsed != null && parsed.hasMatchedOption(tuning)) {
        throw usage(tuning + " is a setting of --tune-clip, which was not given");
      }
    }
    int[] sh = parseShard();
    boolean inject = injectSample != null || injectBump != null;
    int modes = (merge != null ? 1 : 0) + (tuneClip ? 1 : 0) + (inject ? 1 : 0);
    if (modes > 1 || (injectSample != null && injectBump != null)) {
      throw usage("choose one of --merge, --tune-clip, --inject-sample and --inject-bump");
    }
    if (merge == null && (toys == null || toys < 1)) {
      throw usage("--toys N (N ≥ 1) is required" + (tuneClip ? " (toys per clip)" : ""));
    }
    if (inject != (injectYield != null)) {
      throw usage(inject ? "--inject-sample and --inject-bump need --inject-yield K"
          : "--inject-yield needs --inject-sample or --inject-bump");
    }
    if (merge != null && sh[1] != 1) {
      throw usage("--merge takes no --shard: it brings in whole shard files");
    }
    try (EventStore store = EventStore.open(index)) {
      Context c = context(store);
      if (merge != null) {
        return merge(o, c);
      }
      if (tuneClip) {
        return tune(o, c, sh);
      }
      if (inject) {
        return inject(o, c, sh);
      }
      return calibrate(o, c, sh);
    }
  }

  private CommandLine.ParameterException usage(String message) {
    return new CommandLine.ParameterException(spec.commandLine(), message);
  }

  private int[] parseShard() {
    String[] parts = shard.split("/");
    int si;
    int sn;
    try {
      si = Integer.parseInt(parts[0]);
      sn = Integer.parseInt(parts[1]);
    } catch (RuntimeException e) {
      throw usage("--shard must be i/n, e.g. 2/8");
    }
    if (parts.length != 2 || sn < 1 || si < 1 || si > sn) {
      throw usage("--shard must be i/n with 1 ≤ i ≤ n");
    }
    return new int[] {si, sn};
  }

  private Context context(EventStore store) throws IOException {
    Manifest m = store.manifest();
    Manifest.Model mm = version != null ? m.model(version) : latest(m);
    if (mm == null || mm.modelFile() == null) {
      throw new InputException(index, "has no fitted model " + (version == null ? "(run triage fit first)"
          : "version '" + version + "'"));
    }
    RatioModel model = ModelFiles.load(index, mm);
    FitSettings settings = model.training().settings();
    if (threads != null) {
      if (threads < 1 || threads > 1024) {
        throw usage("--threads must be between 1 and 1024");
      }
      settings = settings.withThreads(threads);
    }
    double expected = model.training().expectedCount();
    String settingsJson = Output.JSON.writeValueAsString(settings.withThreads(1));
    String fingerprint = fingerprint(settingsJson + "|" + expected + "|" + seed + "|" + m.indexId() + "|"
        + mm.version() + "|" + mm.sha256());
    // the same parts, recorded so that a refused merge can name what differs (seed and model have fields of their own)
    Map<String, String> parts = new LinkedHashMap<>();
    parts.put("fit settings", fingerprint(settingsJson));
    parts.put("expected count", String.valueOf(expected));
    parts.put("index id", m.indexId());
    parts.put("model file", mm.sha256());
    return new Context(store, m, mm, model, settings, expected, model.training().testStatistic(), fingerprint, parts,
        index.resolve("toys").resolve(mm.version()));
  }

  private static String fingerprint(String text) {
    return Fingerprints.sha256(text.getBytes(StandardCharsets.UTF_8)).substring(0, 16);
  }

  private ToyLog.Header nullHeader(Context c) {
    return new ToyLog.Header(ToyLog.FORMAT, c.nullFingerprint(), c.mm().version(), seed, "null", c.nullParts());
  }

  /** The reference sample as the model sees it: feature-major features and weights. */
  private record Reference(List<String> features, double[] x, double[] w) {}

  private Reference reference(Context c) throws IOException {
    String reference = Roles.name(c.manifest(), Role.REFERENCE);
    List<String> features = c.model().featureNames();
    double[] ref = FitCommand.featureMajor(c.store().columns(reference, features));
    double[] w = c.store().weights(reference);
    if (c.settings().optimiser() == triage.core.ratio.OptimiserKind.PROFILED_LBFGS
        && c.manifest().sample(reference).negativeWeights() > 0) {
      throw new InputException(index, "model " + c.mm().version() + " was fitted with the profiled optimiser, which "
          + "needs a reference without negative weights; this reference has "
          + c.manifest().sample(reference).negativeWeights() + " (fit again with --optimiser lbfgs)");
    }
    // every mode draws toys from this reference with probability ∝ weight: refused before anything is written
    triage.core.calibration.ToySampler.requirePositiveWeights(w);
    if (c.expected() > 0.5 * w.length) {
      throw new InputException(index, String.format(Locale.ROOT, "toys draw about %.0f events from a reference "
          + "of %d without replacement; the reference must be much larger (at least twice, better ten times) "
          + "than the expected count", c.expected(), w.length));
    }
    return new Reference(features, ref, w);
  }

  private List<Long> todo(java.util.Set<Long> done, int[] sh) {
    List<Long> todo = new ArrayList<>();
    for (long k = sh[0] - 1; k < toys; k += sh[1]) {
      if (!done.contains(k)) {
        todo.add(k);
      }
    }
    return todo;
  }

  private static long[] longs(List<Long> list) {
    return list.stream().mapToLong(Long::longValue).toArray();
  }

  // ---- null toys -------------------------------------------------------------------------------------------

  private int calibrate(Output o, Context c, int[] sh) throws IOException {
    Reference r = reference(c);
    Path file = c.folder().resolve("seed-" + seed + "-shard-" + sh[0] + "-of-" + sh[1] + ".jsonl");
    TreeMap<Long, ToyLog.Entry> done = readAll(c.folder(), seed, c.nullFingerprint());
    List<Long> todo = todo(done.keySet(), sh);
    o.note("model %s: t_obs = %.4f, %d parameters; %d toy%s already done (all shards), %d to fit in shard %s",
        c.mm().version(), c.tObs(), c.model().parameterCount(), done.size(), done.size() == 1 ? "" : "s",
        todo.size(), shard);
    ToyLog.Header header = nullHeader(c);
    try (ToyProgress progress = ToyProgress.start(o, "toys " + c.mm().version(), todo.size())) {
      Calibration.run(r.features(), r.x(), r.w(), c.expected(), c.settings(), seed, longs(todo), e -> {
        ToyLog.append(file, header, List.of(e));
        progress.step(String.format(Locale.ROOT, "  toy %d: t = %.3f (%d events, %s, %.1f s)", e.toy(), e.t(),
            e.events(), e.converged() ? "converged" : "not converged", e.seconds()), e.t());
      });
    }
    summarise(o, c, readAll(c.folder(), seed, c.nullFingerprint()), "calibrate", Map.of());
    return ExitCodes.OK;
  }

  private int merge(Output o, Context c) throws IOException {
    TreeMap<Long, ToyLog.Entry> existing = readAll(c.folder(), seed, c.nullFingerprint());
    ToyLog.Header header = nullHeader(c);
    ToyMerge.Plan plan = ToyMerge.plan(existing, c.folder(), merge, header);
    ToyMerge.apply(plan, header);
    List<Map<String, Object>> files = new ArrayList<>();
    for (ToyMerge.FilePlan p : plan.files()) {
      o.note("merged %s: %d new toys, %d already present (same t) -> %s", p.source(), p.added().size(),
          p.duplicates(), p.target());
      Map<String, Object> f = new LinkedHashMap<>();
      f.put("file", p.source().toString());
      f.put("added", p.added().size());
      f.put("duplicates", p.duplicates());
      f.put("target", p.target().toString());
      files.add(f);
    }
    summarise(o, c, readAll(c.folder(), seed, c.nullFingerprint()), "calibrate", Map.of("merged", files));
    return ExitCodes.OK;
  }

  private void summarise(Output o, Context c, TreeMap<Long, ToyLog.Entry> all, String command,
      Map<String, Object> extra) throws IOException {
    double[] ts = all.values().stream().mapToDouble(ToyLog.Entry::t).toArray();
    if (ts.length == 0) {
      throw new InputException(c.folder(), "holds no toys of model " + c.mm().version() + " with seed " + seed
          + " and these settings (run triage calibrate --toys N first)");
    }
    long unconverged = all.values().stream().filter(e -> !e.converged()).count();
    double seconds = all.values().stream().mapToDouble(ToyLog.Entry::seconds).average().orElse(Double.NaN);
    Calibration.Summary s = Calibration.summarise(c.tObs(), ts, c.model().parameterCount());
    o.say("model %s: t_obs = %.4f from %d toys (seed %d; %.2f s per toy)", c.mm().version(), c.tObs(), ts.length,
        seed, seconds);
    o.say("headline   %s", s.headline());
    if (s.fit() != null) {
      o.say("χ² fit     ν = %.2f ± %.2f (KS goodness of fit p = %.3g); asymptotic p %s, Z = %.2f",
          s.fit().dof(), s.fit().standardError(), s.fit().ksPValue(), Output.pEquals(s.pFitted()), s.zFitted());
    }
    o.say("Wilks      χ²(%d parameters): p %s, Z = %.2f", s.parameters(), Output.pEquals(s.pParameters()),
        s.zParameters());
    if (unconverged > 0) {
      s.warnings().add(unconverged + " of " + ts.length + " toys did not meet the stopping rule (like the data "
          + "fit, if it did not): t is understated alike in both");
    }
    if (!c.model().training().converged() && unconverged == 0) {
      s.warnings().add("the data fit did not meet the stopping rule but every toy did: t_obs may be understated "
          + "against the toys (refit the data with more iterations)");
    }
    Map<String, Object> tuned = tunedClipFor(c, s.warnings());
    for (String warning : s.warnings()) {
      o.say("warning    %s", warning);
    }
    List<String> plots = plot(c.folder().resolve("toys-seed-" + seed), () -> ToyChart.toys(
        String.format(Locale.ROOT, "model %s: %d toys, t_obs = %.4g", c.mm().version(), ts.length, c.tObs()), ts,
        c.tObs(), s.fit() == null ? Double.NaN : s.fit().dof(), c.model().parameterCount(), null));
    if (!plots.isEmpty()) {
      o.say("plot       %s", String.join(", ", plots));
    }
    o.say("note: this is a global p-value for the whole model-independent test, not for any selection made "
        + "afterwards; a p-value is not the probability that a signal is real.");
    Map<String, Object> result = head(command, c);
    result.put("settingsFingerprint", c.nullFingerprint());
    result.put("observedT", c.tObs());
    result.putAll(extra);
    result.put("toys", all.values());
    result.put("secondsPerToy", seconds);
    result.put("summary", s);
    result.put("tunedClip", tuned);
    result.put("plots", plots);
    o.result(result);
  }

  /** The tuned clip as calibrate records it, with a warning when the model was fitted with another clip. */
  private Map<String, Object> tunedClipFor(Context c, List<String> warnings) throws IOException {
    TunedClip tc = TunedClip.read(index.resolve(TUNED_CLIP));
    if (tc == null) {
      return null;
    }
    double used = c.settings().clip();
    boolean sameNetwork = tc.hiddenWidths().equals(c.settings().hiddenWidths())
        && tc.activation().equals(c.settings().activation().toString())
        && tc.loss().equals(c.settings().loss().toString());
    Map<String, Object> t = new LinkedHashMap<>();
    t.put("file", index.resolve(TUNED_CLIP).toString());
    t.put("clip", tc.clip());
    t.put("modelClip", used);
    t.put("sameNetwork", sameNetwork);
    if (sameNetwork && tc.clip() != used) {
      warnings.add(String.format(Locale.ROOT, "model %s was fitted with clip %s but the tuned clip is %s (fit "
          + "--clip tuned makes a model with it)", c.mm().version(), used, tc.clip()));
    }
    return t;
  }

  // ---- clip tuning -----------------------------------------------------------------------------------------

  private int tune(Output o, Context c, int[] sh) throws IOException {
    Reference r = reference(c);
    double[] grid = clips.stream().mapToDouble(Double::doubleValue).sorted().distinct().toArray();
    int[] capGrid = caps.stream().mapToInt(Integer::intValue).toArray();
    for (double cl : grid) {
      if (!(cl >= FitSettings.MIN_CLIP) || !Double.isFinite(cl)) {
        throw usage("--clips must be finite and at least " + FitSettings.MIN_CLIP + ", found " + cl);
      }
    }
    try {
      ClipTuning.checkCaps(capGrid);
    } catch (IllegalArgumentException e) {
      throw usage("--caps: " + e.getMessage());
    }
    if (!(plateauTolerance >= 0)) {
      throw usage("--plateau-tolerance must be ≥ 0");
    }
    Path folder = c.folder().resolve("tuning");
    int k = c.model().parameterCount();
    Map<Double, String> fps = new LinkedHashMap<>();
    Map<Double, TreeMap<Long, ClipTuning.TuningToy>> done = new LinkedHashMap<>();
    int todoTotal = 0;
    for (double cl : grid) {
      FitSettings s = ClipTuning.capped(c.settings().withThreads(1).withClip(cl), capGrid[capGrid.length - 1]);
      String fp = fingerprint(Output.JSON.writeValueAsString(s) + "|" + java.util.Arrays.toString(capGrid) + "|"
          + c.expected() + "|" + seed + "|" + c.manifest().indexId() + "|" + c.mm().version() + "|"
          + c.mm().sha256() + "|tuning");
      fps.put(cl, fp);
      TreeMap<Long, ClipTuning.TuningToy> d = readTuning(folder, tuningPrefix(cl, fp), fp);
      done.put(cl, d);
      todoTotal += todo(d.keySet(), sh).size();
    }
    o.note("model %s: clip tuning over clips %s and caps %s, %d toys per clip; %d fits to do in shard %s",
        c.mm().version(), java.util.Arrays.toString(grid), java.util.Arrays.toString(capGrid), toys, todoTotal,
        shard);
    try (ToyProgress progress = ToyProgress.start(o, "clip tuning", todoTotal)) {
      for (double cl : grid) {
        String fp = fps.get(cl);
        Path file = folder.resolve(tuningPrefix(cl, fp) + "shard-" + sh[0] + "-of-" + sh[1] + ".jsonl");
        ToyLog.Header h = new ToyLog.Header(ToyLog.FORMAT, fp, c.mm().version(), seed, "clip-tuning C=" + cl);
        ClipTuning.run(r.features(), r.x(), r.w(), c.expected(), c.settings(), seed, cl, capGrid,
            longs(todo(done.get(cl).keySet(), sh)), e -> {
              ToyLog.append(file, h, List.of(e));
              progress.step(String.format(Locale.ROOT, "  clip %s toy %d: t = %s at caps %s (%.1f s)", cl,
                  e.toy(), fmt(e.t()), java.util.Arrays.toString(capGrid), e.seconds()), e.t()[e.t().length - 1]);
            });
      }
    }
    List<ClipTuning.Curve> curves = new ArrayList<>();
    for (double cl : grid) {
      List<ClipTuning.TuningToy> ts = List.copyOf(readTuning(folder, tuningPrefix(cl, fps.get(cl)),
          fps.get(cl)).values());
      curves.add(ClipTuning.curve(cl, capGrid, ts, k, plateauTolerance));
    }
    ClipTuning.Choice choice = ClipTuning.choose(curves, k, plateauTolerance);
    StringBuilder head = new StringBuilder(String.format(Locale.ROOT, "%8s %6s", "clip", "toys"));
    for (int cap : capGrid) {
      head.append(String.format(Locale.ROOT, " %17s", "cap " + cap + " med/97.5%"));
    }
    o.say("%s %8s %8s %6s %9s", head, "growth", "plateau", "KS D", "converged");
    for (ClipTuning.Curve cv : curves) {
      StringBuilder line = new StringBuilder(String.format(Locale.ROOT, "%8s %6d", cv.clip(), cv.toys()));
      for (int j = 0; j < capGrid.length; j++) {
        line.append(String.format(Locale.ROOT, " %17s", String.format(Locale.ROOT, "%.2f/%.2f", cv.median()[j],
            cv.upper()[j])));
      }
      o.say("%s %8.3f %8s %6.3f %8.0f%%", line, cv.growth(), cv.plateau() ? "yes" : "overfits", cv.ksDistance(),
          100 * cv.converged());
    }
    o.say("rule       %s", choice.rule());
    Path record = index.resolve(TUNED_CLIP);
    boolean complete = curves.stream().allMatch(cv -> cv.toys() >= toys);
    if (choice.clip() == null) {
      o.say("no clip plateaued within caps up to %d: nothing recorded (raise --caps or try smaller --clips)",
          capGrid[capGrid.length - 1]);
    } else if (!complete) {
      o.say("chosen     clip %s on the toys present so far; not recorded until every shard's toys are here",
          choice.clip());
    } else {
      double ks = curves.stream().filter(cv -> cv.clip() == choice.clip()).findFirst().orElseThrow().ksDistance();
      new TunedClip(TunedClip.FORMAT, choice.clip(), c.settings().hiddenWidths(),
          c.settings().activation().toString(), c.settings().loss().toString(), c.mm().version(), seed, toys, grid,
          capGrid, plateauTolerance, k, ks, choice.rule()).write(record);
      o.say("chosen     clip %s, recorded in %s (fit --clip tuned uses it)", choice.clip(), record);
    }
    List<String> plots = plot(folder.resolve("clip-tuning-seed-" + seed), () -> ToyChart.tuning(String.format(
        Locale.ROOT, "model %s: clip tuning, %d toys per clip", c.mm().version(), toys), curves));
    if (!plots.isEmpty()) {
      o.say("plot       %s", String.join(", ", plots));
    }
    Map<String, Object> result = head("calibrate", c);
    result.put("mode", "tune-clip");
    result.put("toysPerClip", toys);
    result.put("choice", choice);
    result.put("recorded", choice.clip() != null && complete ? record.toString() : null);
    result.put("plots", plots);
    o.result(result);
    return ExitCodes.OK;
  }

  private static String tuningPrefix(double clip, String fp) {
    return "clip-" + clip + "-" + fp + "-";
  }

  private static TreeMap<Long, ClipTuning.TuningToy> readTuning(Path folder, String prefix, String fp)
      throws IOException {
    TreeMap<Long, ClipTuning.TuningToy> all = new TreeMap<>();
    if (!Files.isDirectory(folder)) {
      return all;
    }
    try (Stream<Path> files = Files.list(folder)) {
      for (Path f : files.filter(p -> p.getFileName().toString().startsWith(prefix)).sorted().toList()) {
        all.putAll(ToyLog.read(f, fp, ClipTuning.TuningToy.class, ClipTuning.TuningToy::toy));
      }
    }
    return all;
  }

  private static String fmt(double[] v) {
    StringBuilder b = new StringBuilder("[");
    for (int i = 0; i < v.length; i++) {
      b.append(i == 0 ? "" : ", ").append(String.format(Locale.ROOT, "%.2f", v[i]));
    }
    return b.append(']').toString();
  }

  // ---- signal injection ------------------------------------------------------------------------------------

  private int inject(Output o, Context c, int[] sh) throws IOException {
    Reference r = reference(c);
    double k = injectYield;
    if (!(k > 0) || !Double.isFinite(k)) {
      throw usage("--inject-yield must be finite and positive, found " + k);
    }
    Signal signal;
    String label;
    String identity;
    if (injectSample != null) {
      Manifest.Sample sample = c.manifest().sample(injectSample);
      if (sample == null) {
        throw new InputException(index, "--inject-sample: the index has no sample '" + injectSample + "'");
      }
      // only the reference the toys are drawn from is refused: another sample with the reference role (a
      // weighted signal simulation, as docs/sample-spec.md suggests) is what injection is for
      if (injectSample.equals(Roles.name(c.manifest(), Role.REFERENCE))) {
        throw new InputException(index, "--inject-sample: '" + injectSample + "' is the reference sample the toys "
            + "are drawn from; inject another sample");
      }
      double[] w = c.store().weights(injectSample);
      for (int i = 0; i < w.length; i++) {
        if (!(w[i] > 0)) {
          throw new InputException(index, "sample '" + injectSample + "' has weight " + w[i] + " at event " + i
              + ": injected events are drawn with probability proportional to weight, which must be positive");
        }
      }
      if (k > 0.5 * w.length) {
        throw new InputException(index, String.format(Locale.ROOT, "--inject-yield %s draws from sample '%s' of "
            + "%d events without replacement; it must be at most half of them", k, injectSample, w.length));
      }
      signal = new Signal.FromSample(injectSample, FitCommand.featureMajor(c.store().columns(injectSample,
          r.features())), w, k);
      label = "sample-" + injectSample + "-yield-" + k;
      identity = signal.describe() + "|" + sample.sha256();
    } else {
      String[] eq = injectBump.split("=", 2);
      String[] ms = eq.length == 2 ? eq[1].split(",") : new String[0];
      double mean;
      double sigma;
      try {
        if (ms.length != 2) {
          throw new NumberFormatException();
        }
        mean = Double.parseDouble(ms[0].trim());
        sigma = Double.parseDouble(ms[1].trim());
      } catch (NumberFormatException e) {
        throw usage("--inject-bump must be FEATURE=MEAN,SIGMA, e.g. m=125,2; found '" + injectBump + "'");
      }
      int f = r.features().indexOf(eq[0].trim());
      if (f < 0) {
        throw new InputException(index, "--inject-bump: '" + eq[0].trim() + "' is not a feature of model "
            + c.mm().version()
            + " (features: " + String.join(", ", r.features()) + ")");
      }
      try {
        signal = new Signal.Bump(eq[0].trim(), f, mean, sigma, k);
      } catch (IllegalArgumentException e) {
        throw usage("--inject-bump: " + e.getMessage());
      }
      label = "bump-" + eq[0].trim() + "-" + mean + "-" + sigma + "-yield-" + k;
      identity = signal.describe();
    }
    label = label.replaceAll("[^A-Za-z0-9._-]", "_");
    if (k > 0.5 * (r.w().length - c.expected()) && signal instanceof Signal.Bump) {
      throw new InputException(index, "--inject-yield " + k + " takes too many carrier events from the reference");
    }
    String fp = fingerprint(c.nullFingerprint() + "|" + identity);
    Path folder = c.folder().resolve("signal").resolve(label);
    Path file = folder.resolve("seed-" + seed + "-shard-" + sh[0] + "-of-" + sh[1] + ".jsonl");
    TreeMap<Long, ToyLog.SignalToy> done = readSignal(folder, fp);
    List<Long> todo = todo(done.keySet(), sh);
    o.note("model %s: injecting %s; %d signal toy%s already done (all shards), %d to fit in shard %s",
        c.mm().version(), signal.describe(), done.size(), done.size() == 1 ? "" : "s", todo.size(), shard);
    ToyLog.Header h = new ToyLog.Header(ToyLog.FORMAT, fp, c.mm().version(), seed, "signal " + signal.describe());
    try (ToyProgress progress = ToyProgress.start(o, "signal toys", todo.size())) {
      Calibration.runWithSignal(r.features(), r.x(), r.w(), c.expected(), c.settings(), seed, longs(todo), signal,
          e -> {
            ToyLog.append(file, h, List.of(e));
            progress.step(String.format(Locale.ROOT, "  signal toy %d: t = %.3f (%d events, %d injected, %.1f s)",
                e.toy(), e.t(), e.events(), e.injected(), e.seconds()), e.t());
          });
    }
    TreeMap<Long, ToyLog.SignalToy> all = readSignal(folder, fp);
    double[] st = all.values().stream().mapToDouble(ToyLog.SignalToy::t).toArray();
    double[] nulls = readAll(c.folder(), seed, c.nullFingerprint()).values().stream().mapToDouble(ToyLog.Entry::t)
        .toArray();
    Calibration.Sensitivity s = Calibration.sensitivity(st, nulls, c.model().parameterCount());
    double injected = all.values().stream().mapToInt(ToyLog.SignalToy::injected).average().orElse(Double.NaN);
    o.say("model %s: %s; %d signal toys (seed %d, mean %.1f injected events), %d null toys", c.mm().version(),
        signal.describe(), st.length, seed, injected, nulls.length);
    o.say("signal t   median %.3f, central 68%% [%.3f, %.3f]", s.medianT(), s.lowerT(), s.upperT());
    o.say("sensitivity %s", s.statement());
    if (!Double.isNaN(s.power())) {
      o.say("power      %.0f%% of signal toys have an empirical p ≤ 0.05 against the null toys", 100 * s.power());
    }
    List<String> plots = plot(folder.resolve("toys-seed-" + seed), () -> ToyChart.toys(String.format(Locale.ROOT,
        "model %s: null and signal toys (%s)", c.mm().version(), signal.describe()), nulls, Double.NaN,
        Double.NaN, c.model().parameterCount(), st));
    if (!plots.isEmpty()) {
      o.say("plot       %s", String.join(", ", plots));
    }
    Map<String, Object> result = head("calibrate", c);
    result.put("mode", "inject");
    result.put("signal", signal.describe());
    result.put("settingsFingerprint", fp);
    result.put("toys", all.values());
    result.put("sensitivity", s);
    result.put("plots", plots);
    o.result(result);
    return ExitCodes.OK;
  }

  private static TreeMap<Long, ToyLog.SignalToy> readSignal(Path folder, String fp) throws IOException {
    TreeMap<Long, ToyLog.SignalToy> all = new TreeMap<>();
    if (!Files.isDirectory(folder)) {
      return all;
    }
    try (Stream<Path> files = Files.list(folder)) {
      for (Path f : files.filter(p -> p.getFileName().toString().endsWith(".jsonl")).sorted().toList()) {
        all.putAll(ToyLog.read(f, fp, ToyLog.SignalToy.class, ToyLog.SignalToy::toy));
      }
    }
    return all;
  }

  // ---- shared ----------------------------------------------------------------------------------------------

  private Map<String, Object> head(String command, Context c) {
    Map<String, Object> result = new LinkedHashMap<>();
    result.put("command", command);
    result.put("tool", "triage " + ToolVersion.get());
    result.put("index", index.toString());
    result.put("model", c.mm().version());
    result.put("seed", seed);
    result.put("shard", shard);
    return result;
  }

  /** Writes a chart to --plot PREFIX, or to the default prefix; nothing with --plot none. */
  private List<String> plot(Path defaultPrefix, java.util.function.Supplier<org.jfree.chart.JFreeChart> chart)
      throws IOException {
    if ("none".equals(plot)) {
      return List.of();
    }
    Path prefix = plot != null ? Path.of(plot) : defaultPrefix;
    return ToyChart.write(chart.get(), prefix).stream().map(Path::toString).toList();
  }

  /** Every finished toy of this run seed and settings, over all shard files. */
  private static TreeMap<Long, ToyLog.Entry> readAll(Path folder, long seed, String fingerprint)
      throws IOException {
    TreeMap<Long, ToyLog.Entry> all = new TreeMap<>();
    if (!Files.isDirectory(folder)) {
      return all;
    }
    try (Stream<Path> files = Files.list(folder)) {
      for (Path f : files.filter(p -> Files.isRegularFile(p)
          && p.getFileName().toString().startsWith("seed-" + seed + "-")).sorted().toList()) {
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
