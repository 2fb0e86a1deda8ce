package triage.shell;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.io.PrintWriter;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.ReadOptions;
import triage.examples.DemoScenario;
import triage.index.Ingest;
import triage.index.IngestReport;

/**
 * {@code triage demo}: the main job on built-in demo data, as an analyst would run it, ending in a report.
 *
 * <p>Each step runs an ordinary triage command (the same the user can type) and keeps its result object; the
 * findings, the report and the demo's own JSON are read from those objects, so nothing here recomputes a
 * statistic. The few choices an analyst makes by eye (which sector, the missing-momentum cut of the burst, the
 * mass range scanned) are written in this class and named in the report as choices.
 */
@Command(name = "demo", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Run the whole job on built-in demo data: generate the fictional photon-plus-jet samples, ingest "
        + "them, fit the ratio model, calibrate its test statistic with pseudo-experiments, select the high-score "
        + "events and rank what sets them apart, check runs and detector sectors for an artefact, scan the "
        + "photon-jet mass away from the artefact, stress the excess with the systematics, freeze a region, follow "
        + "it up on the independent samples, and write a report (DIR/report.html and DIR/report.json)."},
    footer = ExitCodes.FOOTER)
public final class DemoCommand implements Callable<Integer> {
  /** Missing-momentum cut (GeV) of the burst selection: read by eye from the high-score events' histogram. */
  static final double BURST_MET_CUT = 60;

  /** The photon-jet mass range scanned for a bump, GeV, and its bins. */
  static final double SCAN_LO = 300;
  static final double SCAN_HI = 1500;
  static final int SCAN_BINS = 60;

  private static final int STEPS = 10;

  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Output folder. */
  @Option(names = "--out", defaultValue = "triage-demo", paramLabel = "DIR",
      description = "Folder for samples, index, plots and report (default: ${DEFAULT-VALUE}).")
  Path out;

  /** Small scenario. */
  @Option(names = "--small", description = "Use the small scenario (a tenth of the events).")
  boolean small;

  /** Fit iteration cap. */
  @Option(names = "--max-iterations", defaultValue = "1500", paramLabel = "N",
      description = "Iteration cap of the demo's fit and of every toy's (default: ${DEFAULT-VALUE}).")
  int maxIterations;

  /** Toys. */
  @Option(names = "--toys", defaultValue = "16", paramLabel = "N",
      description = "Pseudo-experiments for the calibration (default: ${DEFAULT-VALUE}; at least 10 for the χ² "
          + "cross-check).")
  int toys;

  /** Permutations. */
  @Option(names = "--permutations", defaultValue = "200", paramLabel = "N",
      description = "Permutations of the variable ranking (default: ${DEFAULT-VALUE}).")
  int permutations;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  private final List<ObjectNode> steps = new ArrayList<>();
  private PrintWriter human;
  private PrintWriter err;
  private Output o;
  private int step;

  @Override
  public Integer call() throws Exception {
    o = new Output(spec, json);
    Output.prepareFolder(out);
    human = json ? spec.commandLine().getErr() : spec.commandLine().getOut();
    err = spec.commandLine().getErr();
    if (toys < 0 || permutations < 0 || maxIterations < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(),
          "--toys and --permutations must be >= 0 and --max-iterations >= 1");
    }
    long start = System.nanoTime();
    DemoScenario.Settings s = small ? DemoScenario.Settings.small() : DemoScenario.Settings.standard();
    Path samples = out.resolve("samples");
    Path index = out.resolve("index");
    Path plots = out.resolve("plots");
    Files.createDirectories(plots);
    String ix = index.toString();

    header("generating the fictional samples in %s (seed %d)", samples, s.seed());
    DemoScenario.Written w = DemoScenario.write(samples, s);
    ObjectNode truth = truth(w, s);
    say("      injected: %d resonance and %d noise-burst events in the observed sample; %d resonance events in "
        + "the follow-up sample", truth.path("observed").path("resonance").asLong(),
        truth.path("observed").path("noise-burst").asLong(), truth.path("followup-observed").path("resonance")
            .asLong());

    header("ingesting into %s", index);
    IngestReport report = Ingest.run(w.sampleSpec(), index,
        Ingest.Options.defaults().with(ReadOptions.strict()).withReplace(true), line -> say("      " + line));
    record("ingest", Output.JSON.valueToTree(IngestCommand.json(report)), List.of("ingest", "--spec",
        w.spec().toString(), "--index", ix));
    if (run("summary", "info", "--index", ix) == null) {
      return fail();
    }

    header("fitting the ratio model (iteration cap %d)", maxIterations);
    JsonNode fit = run("fit", "fit", "--index", ix, "--max-iterations", String.valueOf(maxIterations));
    if (fit == null) {
      return fail();
    }
    String model = fit.path("version").asText();
    String score = "score:" + model;

    header("calibrating t with %d pseudo-experiments, each fitted like the data", toys);
    if (toys > 0 && run("calibration", "calibrate", "--index", ix, "--toys", String.valueOf(toys), "--model",
        model, "--plot", plots.resolve("toys").toString()) == null) {
      return fail();
    }

    String high = score + " > " + DemoCommand.format(Math.log(3));
    header("the high-score events (f > log 3: observed density at least three times the reference's)");
    if (run("high-score selection", "select", "--index", ix, "--where", high) == null
        || run("high-score ranking", "rank", "--index", ix, "--where", high, "--permutations",
            String.valueOf(permutations)) == null) {
      return fail();
    }

    header("is it a few runs or one detector sector? (a real effect is spread over both)");
    JsonNode bySector = run("high-score by sector", "breakdown", "--index", ix, "--where", high, "--by", "sector",
        "--top", "5");
    JsonNode byRun = run("high-score by run", "breakdown", "--index", ix, "--where", high, "--by", "run", "--top",
        "5");
    if (bySector == null || byRun == null) {
      return fail();
    }
    String sector = bySector.path("values").path(0).path("value").asText();
    String burst = "sector = '" + sector + "' AND met > " + DemoCommand.format(BURST_MET_CUT);
    say("      the worst sector is %s; with large missing momentum it is the burst's signature: %s", sector, burst);
    if (run("high-score in the burst", "select", "--index", ix, "--where", "(" + high + ") AND " + burst) == null
        || run("high-score outside the burst", "select", "--index", ix, "--where", "(" + high + ") AND NOT ("
            + burst + ")") == null) {
      return fail();
    }

    header("away from the burst: a sliding-window scan of the photon-jet mass");
    String clean = "NOT (" + burst + ")";
    JsonNode derive = run("mass window scan", "derive", "--index", ix, "--method", "window", "--features", "m_gj",
        "--where", clean, "--range", DemoCommand.format(SCAN_LO) + ":" + DemoCommand.format(SCAN_HI), "--bins",
        String.valueOf(SCAN_BINS), "--widths", "1:5");
    if (derive == null || run("mass spectrum", "hist", "--index", ix, "--column", "m_gj", "--where", clean,
        "--bins", "40", "--range", "400:1200", "--svg", plots.resolve("m_gj.svg").toString(), "--png",
        plots.resolve("m_gj.png").toString()) == null) {
      return fail();
    }
    String window = derive.path("condition").asText();

    header("does the window explain the excess, and is it spread over sectors and runs?");
    if (run("window ranking", "rank", "--index", ix, "--where", window, "--permutations",
        String.valueOf(permutations)) == null
        || run("window by sector", "breakdown", "--index", ix, "--where", window, "--by", "sector", "--top", "5")
            == null
        || run("window by run", "breakdown", "--index", ix, "--where", window, "--by", "run", "--top", "5") == null
        || run("window stress", "stress", "--index", ix, "--where", window) == null) {
      return fail();
    }

    header("freezing the regions and following them up on the independent samples");
    Path region = out.resolve("resonance-region.json");
    Path burstRegion = out.resolve("burst-region.json");
    if (run("resonance region", "region", "--index", ix, "--where", window, "--name", "photon-jet resonance",
        "--out", region.toString()) == null
        || run("resonance follow-up", "followup", "--region", region.toString(), "--spec", w.spec().toString())
            == null
        || run("burst region", "region", "--index", ix, "--where", burst, "--name", "calorimeter noise burst",
            "--out", burstRegion.toString()) == null
        || run("burst follow-up", "followup", "--region", burstRegion.toString(), "--spec", w.spec().toString())
            == null) {
      return fail();
    }

    header("writing the report");
    double seconds = (System.nanoTime() - start) / 1e9;
    ObjectNode doc = document(s, samples, index, truth, seconds, burst, window);
    Path reportJson = out.resolve("report.json");
    Path reportHtml = out.resolve("report.html");
    Output.JSON.writeValue(reportJson.toFile(), doc);
    Files.writeString(reportHtml, DemoReport.html(doc, plots));
    o.say("");
    for (JsonNode line : doc.path("findings").path("summary")) {
      o.say("  " + line.asText());
    }
    o.say("");
    o.say("demo done in %.0f s. The report: %s (and %s).", seconds, reportHtml, reportJson);
    o.say("Open the index in the console, or replay the demo's questions:");
    o.say("  ./triage console --index %s", index);
    o.say("  ./triage run --index %s examples/scripts/demo-questions.triage", index);
    ObjectNode m = Output.JSON.createObjectNode();
    m.put("command", "demo");
    m.put("tool", "triage " + ToolVersion.get());
    m.put("samples", samples.toString());
    m.put("index", index.toString());
    m.put("seed", s.seed());
    m.set("ingest", steps.get(0).path("result"));
    m.put("report", reportHtml.toString());
    m.put("reportJson", reportJson.toString());
    m.set("findings", doc.path("findings"));
    m.put("seconds", seconds);
    o.result(m);
    return ExitCodes.OK;
  }

  private void header(String format, Object... args) {
    step++;
    say("[%d/%d] %s", step, STEPS, String.format(Locale.ROOT, format, args));
  }

  private void say(String format, Object... args) {
    human.println(args.length == 0 ? format : String.format(Locale.ROOT, format, args));
    human.flush();
  }

  /** Runs one triage command, keeps its result object, and returns it (null when the command failed). */
  private JsonNode run(String title, String... args) {
    say("      $ triage %s", String.join(" ", quoted(args)));
    Object[] last = new Object[1];
    int code = Output.capture(last, () -> Main.run(args, human, err));
    if (code != ExitCodes.OK || last[0] == null) {
      err.printf(Locale.ROOT, "triage: the demo stopped at '%s' (exit %d)%n", title, code);
      err.flush();
      lastCode = code == ExitCodes.OK ? ExitCodes.INTERNAL : code;
      return null;
    }
    JsonNode result = Output.JSON.valueToTree(last[0]);
    record(title, result, List.of(args));
    return result;
  }

  private int lastCode = ExitCodes.INTERNAL;

  private int fail() {
    return lastCode;
  }

  private void record(String title, JsonNode result, List<String> args) {
    ObjectNode n = Output.JSON.createObjectNode();
    n.put("title", title);
    ArrayNode a = n.putArray("command");
    args.forEach(a::add);
    n.set("result", result);
    steps.add(n);
  }

  private static List<String> quoted(String... args) {
    List<String> q = new ArrayList<>();
    for (String a : args) {
      q.add(a.isEmpty() || a.chars().anyMatch(c -> " '\"$()<>*".indexOf(c) >= 0) ? "\"" + a + "\"" : a);
    }
    return q;
  }

  private JsonNode result(String title) {
    for (ObjectNode n : steps) {
      if (n.path("title").asText().equals(title)) {
        return n.path("result");
      }
    }
    return Output.JSON.missingNode();
  }

  /** Counts the truth file's injected events per sample and origin. */
  private static ObjectNode truth(DemoScenario.Written w, DemoScenario.Settings s) throws IOException {
    ObjectNode t = Output.JSON.createObjectNode();
    t.put("file", w.truth().toString());
    t.put("resonanceMass", DemoScenario.RESONANCE_MASS);
    t.put("resonanceWidth", DemoScenario.RESONANCE_WIDTH);
    t.put("idealSignificance", DemoScenario.idealSignificance(s));
    t.put("noisySector", String.valueOf(DemoScenario.NOISY_SECTOR));
    ArrayNode runs = t.putArray("noisyRuns");
    DemoScenario.NOISY_RUNS.forEach(runs::add);
    try (var lines = Files.lines(w.truth())) {
      lines.skip(1).map(l -> l.split(",")).forEach(f -> {
        ObjectNode per = t.has(f[0]) ? (ObjectNode) t.get(f[0]) : t.putObject(f[0]);
        per.put(f[2], per.path(f[2]).asLong() + 1);
      });
    }
    return t;
  }

  /** The report's content: settings, truth, findings read from the steps, the steps, the cautions. */
  private ObjectNode document(DemoScenario.Settings s, Path samples, Path index, ObjectNode truth, double seconds,
      String burst, String window) {
    ObjectNode d = Output.JSON.createObjectNode();
    d.put("format", "triage-report/1");
    d.put("tool", "triage " + ToolVersion.get());
    d.put("created", Instant.now().toString());
    ObjectNode settings = d.putObject("settings");
    settings.put("scenario", small ? "small" : "standard");
    settings.put("seed", s.seed());
    settings.put("referenceEvents", s.referenceEvents());
    settings.put("expectedBackground", s.expectedBackground());
    settings.put("signalEvents", s.signalEvents());
    settings.put("artefactEvents", s.artefactEvents());
    settings.put("maxIterations", maxIterations);
    settings.put("toys", toys);
    settings.put("permutations", permutations);
    settings.put("samples", samples.toString());
    settings.put("index", index.toString());
    ObjectNode choices = settings.putObject("analystChoices");
    choices.put("highScore", "f > log 3");
    choices.put("burst", burst);
    choices.put("massScan", "m_gj in [" + format(SCAN_LO) + ", " + format(SCAN_HI) + "], " + SCAN_BINS
        + " bins, windows of 1 to 5 bins");
    d.set("truth", truth);
    d.set("findings", findings(truth, burst, window));
    ArrayNode st = d.putArray("steps");
    steps.forEach(st::add);
    ArrayNode c = d.putArray("cautions");
    for (String x : CAUTIONS) {
      c.add(x);
    }
    d.put("seconds", seconds);
    return d;
  }

  static final List<String> CAUTIONS = List.of(
      "Every significance of a selection, window or region found on the discovery data is local, and biased "
          + "upwards where the selection was optimised on those data; only the follow-up on independent samples "
          + "is free of that bias.",
      "Local versus global: the window scan tried many windows (look-elsewhere effect); the Bonferroni figure "
          + "bounds the global significance, and a calibrated one needs pseudo-experiments of the whole scan.",
      "The follow-up must use data independent of the discovery data; triage refuses shared event ids unless "
          + "told otherwise.",
      "A p-value is the probability, if there is no signal, of a result at least as extreme: it is not the "
          + "probability that the signal is real.",
      "With few pseudo-experiments the empirical p-value is only a bound; asymptotic χ² figures beyond the "
          + "largest toy are extrapolations.",
      "These are a tool's numbers, not a result: any claim goes through the experiment's own statistical review.");

  private ObjectNode findings(ObjectNode truth, String burst, String window) {
    ObjectNode f = Output.JSON.createObjectNode();
    List<String> summary = new ArrayList<>();
    JsonNode fit = result("fit");
    JsonNode cal = result("calibration");
    ObjectNode g = f.putObject("globalTest");
    g.put("testStatistic", fit.path("testStatistic").asDouble());
    g.put("parameters", fit.path("parameters").asInt());
    g.put("converged", fit.path("converged").asBoolean());
    if (!cal.isMissingNode()) {
      JsonNode sum = cal.path("summary");
      g.put("toys", sum.path("empirical").path("toys").asInt());
      g.put("maxToyT", max(cal.path("toys")));
      g.set("empiricalP", sum.path("empirical").path("pValue"));
      g.put("empiricalBound", sum.path("empirical").path("bound").asText());
      g.set("zParameters", sum.path("zParameters"));
      g.set("zFitted", sum.path("zFitted"));
      g.set("fittedDof", sum.path("fit").path("dof"));
      g.put("headline", sum.path("headline").asText());
      g.set("warnings", sum.path("warnings"));
      g.put("flagged", fit.path("testStatistic").asDouble() > max(cal.path("toys")));
      summary.add(String.format(Locale.ROOT, "global test: t = %.1f against %d toys (largest %.1f): %s",
          fit.path("testStatistic").asDouble(), g.path("toys").asInt(), g.path("maxToyT").asDouble(),
          sum.path("headline").asText()));
    }
    JsonNode sel = result("high-score selection").path("comparisons").path(0);
    ObjectNode h = f.putObject("highScore");
    h.put("observed", sel.path("observed").asLong());
    h.put("expected", sel.path("expected").asDouble());
    h.put("localZBi", sel.path("localZBi").asDouble());
    h.set("topFeatures", topFeatures(result("high-score ranking").path("versusAll"), 3));
    ObjectNode a = f.putObject("artefact");
    a.put("selection", burst);
    a.set("bySector", worst(result("high-score by sector"), 3));
    a.set("byRun", worst(result("high-score by run"), 3));
    JsonNode in = result("high-score in the burst").path("comparisons").path(0);
    JsonNode outside = result("high-score outside the burst").path("comparisons").path(0);
    a.put("highScoreInBurst", in.path("observed").asLong());
    a.put("highScoreOutsideBurst", outside.path("observed").asLong());
    JsonNode burstFollow = result("burst follow-up").path("result");
    a.put("followUpObserved", burstFollow.path("observed").asLong());
    a.put("followUpExpected", burstFollow.path("expected").asDouble());
    a.put("followUpZBi", burstFollow.path("zBi").asDouble());
    summary.add(String.format(Locale.ROOT, "artefact: the high-score events by sector: %s; by run: %s; %d of the %d are in sector %s with missing momentum above %s GeV; in the follow-up that "
        + "selection holds %d event%s on %.2g expected: it did not survive the repair",
        a.path("bySector").path("verdict").asText(), a.path("byRun").path("verdict").asText(),
        in.path("observed").asLong(), sel.path("observed").asLong(), sector(a), format(BURST_MET_CUT),
        burstFollow.path("observed").asLong(), burstFollow.path("observed").asLong() == 1 ? "" : "s",
        burstFollow.path("expected").asDouble()));
    JsonNode der = result("mass window scan");
    ObjectNode r = f.putObject("resonance");
    JsonNode best = der.path("windows").path(0);
    r.put("condition", window);
    r.put("lo", best.path("lo").asDouble());
    r.put("hi", best.path("hi").asDouble());
    r.put("observed", best.path("observed").asLong());
    r.put("expected", best.path("expected").asDouble());
    r.put("localZBi", best.path("localZ").asDouble());
    r.put("windowsTried", der.path("windowsTried").asInt());
    r.set("bonferroniGlobalZ", der.path("bonferroniGlobalZ"));
    r.set("topFeaturesInWindow", topFeatures(result("window ranking").path("versusAll"), 3));
    r.set("topFeaturesLeftInsideWindow", topFeatures(result("window ranking").path("versusInside"), 1));
    r.set("bySector", worst(result("window by sector"), 3));
    r.set("byRun", worst(result("window by run"), 3));
    JsonNode stress = result("window stress").path("result");
    r.put("zWithSystematics", stress.path("zWithSystematics").asDouble());
    r.put("stressVerdict", stress.path("verdict").asText());
    double mass = truth.path("resonanceMass").asDouble();
    double width = truth.path("resonanceWidth").asDouble();
    r.put("containsResonanceMass", best.path("lo").asDouble() <= mass && mass <= best.path("hi").asDouble());
    r.put("resonanceFractionInside", triage.core.inference.Significance.pFromZ((best.path("lo").asDouble() - mass)
        / width) - triage.core.inference.Significance.pFromZ((best.path("hi").asDouble() - mass) / width));
    JsonNode follow = result("resonance follow-up").path("result");
    r.put("followUpObserved", follow.path("observed").asLong());
    r.put("followUpExpected", follow.path("expected").asDouble());
    r.put("followUpZBi", follow.path("zBi").asDouble());
    r.put("followUpPBi", follow.path("pBi").asDouble());
    summary.add(String.format(Locale.ROOT, "resonance: away from the burst the mass scan finds m_gj in [%s, %s] "
        + "with %d observed on %.1f expected, local Z_Bi = %.2f (best of %d windows; Bonferroni global Z >= %.2f)"
        + "; %.2f with the systematics; by sector %s; by run %s", format(best.path("lo").asDouble()),
        format(best.path("hi").asDouble()), best.path("observed").asLong(), best.path("expected").asDouble(),
        best.path("localZ").asDouble(), der.path("windowsTried").asInt(), der.path("bonferroniGlobalZ")
            .asDouble(), stress.path("zWithSystematics").asDouble(), r.path("bySector").path("verdict").asText(),
        r.path("byRun").path("verdict").asText()));
    summary.add(String.format(Locale.ROOT, "follow-up on the independent samples: %d observed on %.1f expected, "
        + "Z_Bi = %.2f (p = %.2g), free of the discovery's selection bias", follow.path("observed").asLong(),
        follow.path("expected").asDouble(), follow.path("zBi").asDouble(), follow.path("pBi").asDouble()));
    ArrayNode s = f.putArray("summary");
    summary.forEach(s::add);
    return f;
  }

  private static double max(JsonNode toys) {
    double m = Double.NEGATIVE_INFINITY;
    for (JsonNode t : toys) {
      m = Math.max(m, t.path("t").asDouble());
    }
    return m;
  }

  private static ArrayNode topFeatures(JsonNode rows, int n) {
    ArrayNode a = Output.JSON.createArrayNode();
    for (int i = 0; i < Math.min(n, rows.size()); i++) {
      JsonNode r = rows.get(i);
      ObjectNode x = a.addObject();
      x.put("feature", r.path("feature").asText());
      x.put("ks", r.path("ks").asDouble());
      x.set("ksAsymptoticP", r.path("ksAsymptoticP"));
      x.set("adjustedP", r.path("adjustedP"));
    }
    return a;
  }

  private static ObjectNode worst(JsonNode breakdown, int n) {
    ObjectNode w = Output.JSON.createObjectNode();
    w.put("verdict", breakdown.path("verdict").asText());
    w.set("concentratedIn", breakdown.path("concentratedIn"));
    w.put("shareP", breakdown.path("sparse").asBoolean() ? breakdown.path("shareMonteCarloP").asDouble()
        : breakdown.path("shareP").asDouble());
    w.put("homogeneityP", breakdown.path("homogeneitySparse").asBoolean()
        ? breakdown.path("homogeneityMonteCarloP").asDouble() : breakdown.path("homogeneityP").asDouble());
    w.set("topThreeExcessFraction", breakdown.path("topThreeExcessFraction"));
    ArrayNode v = w.putArray("values");
    JsonNode values = breakdown.path("values");
    for (int i = 0; i < Math.min(n, values.size()); i++) {
      v.add(values.get(i));
    }
    return w;
  }

  private static String sector(JsonNode artefact) {
    return artefact.path("bySector").path("values").path(0).path("value").asText();
  }

  static String format(double v) {
    return DeriveCommand.plain(v);
  }
}
