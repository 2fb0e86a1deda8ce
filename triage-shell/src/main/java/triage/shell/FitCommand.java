package triage.shell;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Path;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.ratio.Activation;
import triage.core.ratio.FitResult;
import triage.core.ratio.FitSettings;
import triage.core.ratio.LossKind;
import triage.core.ratio.OptimiserKind;
import triage.core.ratio.RatioModel;
import triage.core.ratio.RatioTrainer;
import triage.core.ratio.StoppingRule;
import triage.core.ratio.TrainingData;
import triage.core.ratio.WeightPolicy;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;

/** {@code triage fit}: learns the observed/reference log density ratio and scores every event. */
@Command(name = "fit", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class, sortOptions = false,
    description = {"Fit the ratio model f(x) ≈ log[n_observed(x)/n_reference(x)] on the index's observed and "
        + "reference samples, store it as a new model version, and score every event of every sample "
        + "(column score:VERSION).",
        "Loss: L = Σ_ref w (e^f − 1) − Σ_obs f with the reference weights as given (their sum is the expected "
            + "count), parameters held in [−clip, clip]; the test statistic is t = −2 min L."},
    footer = ExitCodes.FOOTER)
public final class FitCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Model options. */
  @ArgGroup(exclusive = false, heading = "%nModel:%n")
  ModelOptions model = new ModelOptions();

  /** Training options. */
  @ArgGroup(exclusive = false, heading = "%nTraining:%n")
  TrainingOptions training = new TrainingOptions();

  /** Version name. */
  @Option(names = "--version-name", paramLabel = "NAME",
      description = "Name of the new model version (default: m1, m2, … the next free one).")
  String versionName;

  /** Normalisation. */
  @Option(names = "--normalise", defaultValue = "reference", paramLabel = "reference|observed",
      description = "The expected count the reference predicts: its weights as given (reference, default), or "
          + "scaled to the observed count (observed: compares shapes only).")
  String normalise;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  /** Model options. */
  static final class ModelOptions {
    /** Hidden layers. */
    @Option(names = "--layers", split = ",", defaultValue = "5,5", paramLabel = "W,...",
        description = "Hidden layer widths (default: ${DEFAULT-VALUE}).")
    List<Integer> layers;

    /** Activation. */
    @Option(names = "--activation", defaultValue = "sigmoid", paramLabel = "sigmoid|tanh",
        description = "Hidden activation (default: ${DEFAULT-VALUE}).")
    Activation activation;

    /** Loss. */
    @Option(names = "--loss", defaultValue = "extended", paramLabel = "extended|cross-entropy",
        description = "extended: the extended-likelihood ratio loss (default); cross-entropy: weighted binary "
            + "cross-entropy, converted to the same log ratio and t.")
    String loss;

    /** Clip: a number, or "tuned"; null when not given. */
    @Option(names = "--clip", paramLabel = "C|tuned",
        description = "Weight clipping: every parameter held in [-C, C] (default: 9); tuned: the clip chosen by "
            + "calibrate --tune-clip (DIR/" + CalibrateCommand.TUNED_CLIP + ").")
    String clip;
  }

  /** Training options. */
  static final class TrainingOptions {
    /** Optimiser. */
    @Option(names = "--optimiser", defaultValue = "lbfgs", paramLabel = "lbfgs|profiled|adam",
        description = "lbfgs: projected L-BFGS in the clip box (default); profiled: the same over the hidden layers, "
            + "the output layer solved exactly at every step (extended loss only; often fewer evaluations when the "
            + "observed sample is small against the reference, see DEVELOPERS.md); adam: Adam for a fixed number of "
            + "epochs.")
    String optimiser;

    /** Iteration cap. */
    @Option(names = "--max-iterations", defaultValue = "5000", paramLabel = "N",
        description = "Iteration cap of L-BFGS (default: ${DEFAULT-VALUE}).")
    int maxIterations;

    /** Relative tolerance. */
    @Option(names = "--tolerance", defaultValue = "1e-8", paramLabel = "X",
        description = "Converged when the relative loss change over the window is below X (default: "
            + "${DEFAULT-VALUE}) ...")
    double tolerance;

    /** Gradient tolerance. */
    @Option(names = "--gradient-tolerance", defaultValue = "1e-2", paramLabel = "G",
        description = "... and the projected-gradient norm is below G (default: ${DEFAULT-VALUE}).")
    double gradientTolerance;

    /** Epochs. */
    @Option(names = "--epochs", defaultValue = "2000", paramLabel = "N",
        description = "Adam epochs (default: ${DEFAULT-VALUE}).")
    int epochs;

    /** Learning rate. */
    @Option(names = "--learning-rate", defaultValue = "1e-3", paramLabel = "A",
        description = "Adam step size (default: ${DEFAULT-VALUE}).")
    double learningRate;

    /** Restarts. */
    @Option(names = "--starts", defaultValue = "1", paramLabel = "N",
        description = "Random starts; the lowest loss is kept (default: ${DEFAULT-VALUE}).")
    int starts;

    /** Seed. */
    @Option(names = "--seed", defaultValue = "1", paramLabel = "N",
        description = "Seed of the initial parameters (default: ${DEFAULT-VALUE}).")
    long seed;

    /** Threads. */
    @Option(names = "--threads", paramLabel = "N", description = "Threads (default: all processors).")
    Integer threads;
  }

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    CommandLine.ParseResult parsed = spec.commandLine().getParseResult();
    if (parsed.hasMatchedOption("--layers") && parsed.matchedOption("--layers").originalStringValues().size() > 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--layers is given more than once; give every "
          + "hidden layer's width in one list, e.g. --layers 5,5");
    }
    FitSettings settings = settings(clip(o));
    // Adam runs its epochs and then judges convergence by --tolerance and --gradient-tolerance; only the iteration
    // cap is L-BFGS's alone
    List<String> idle = new java.util.ArrayList<>();
    for (String name : settings.optimiser() == OptimiserKind.ADAM
        ? List.of("--max-iterations") : List.of("--epochs", "--learning-rate")) {
      if (parsed.hasMatchedOption(name)) {
        idle.add(name);
      }
    }
    if (!idle.isEmpty()) {
      o.note("warning: %s %s no effect with --optimiser %s (%s)", String.join(", ", idle),
          idle.size() == 1 ? "has" : "have", training.optimiser, settings.optimiser() == OptimiserKind.ADAM
              ? "Adam runs --epochs epochs, then judges convergence by the tolerances"
              : "--epochs and --learning-rate are Adam's");
    }
    if (versionName != null && Manifest.versionNameProblem(versionName) != null) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--version-name: "
          + Manifest.versionNameProblem(versionName));
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      if (versionName != null && m.model(versionName) != null) {
        throw new CommandLine.ParameterException(spec.commandLine(), "--version-name: the index already has a "
            + "model version '" + versionName + "'; choose another name");
      }
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      List<String> features = m.spec().columns().features();
      double[] ref = featureMajor(store.columns(reference, features));
      double[] refW = store.weights(reference);
      double[] obs = featureMajor(store.columns(observed, features));
      boolean negative = m.sample(reference).negativeWeights() > 0 || m.sample(reference).zeroWeights() > 0;
      double predicted = m.sample(reference).sumOfWeights();
      long nObs = m.sample(observed).events();
      double expected = switch (normalise) {
        case "reference" -> predicted;
        case "observed" -> nObs;
        default -> throw new CommandLine.ParameterException(spec.commandLine(),
            "--normalise must be reference or observed, not '" + normalise + "'");
      };
      if (normalise.equals("reference") && Math.abs(nObs - predicted) > 5 * Math.sqrt(predicted)) {
        o.note("warning: the reference predicts %.6g events and the observed sample has %d (%.1fσ apart); if the "
            + "reference weights are not normalised to the observed data, use --normalise observed",
            predicted, nObs, (nObs - predicted) / Math.sqrt(predicted));
      }
      TrainingData data;
      try {
        data = new TrainingData(features, ref, refW, obs,
            negative ? WeightPolicy.ALLOW_NEGATIVE : WeightPolicy.POSITIVE_ONLY,
            java.util.OptionalDouble.of(expected));
      } catch (IllegalArgumentException e) {
        // e.g. reference weights (negative ones allowed at ingest) that do not sum to a positive yield
        throw new InputException(index, "cannot fit on this index: " + e.getMessage());
      }
      if (settings.optimiser() == OptimiserKind.PROFILED_LBFGS && m.sample(reference).negativeWeights() > 0) {
        throw new InputException(index, "the profiled optimiser needs a reference without negative weights (only "
            + "then is the output layer's problem convex); this reference has " + m.sample(reference).negativeWeights()
            + ": use --optimiser lbfgs");
      }
      o.note("fitting %s on %d observed and %d reference events (%s, clip %s, %s) ...", settings.hiddenWidths(),
          m.sample(observed).events(), m.sample(reference).events(), settings.activation(), settings.clip(),
          settings.optimiser());
      FitResult fit;
      try {
        fit = RatioTrainer.fit(data, settings);
      } catch (IllegalArgumentException e) {
        // a combination of these settings and this index that the fit refuses (e.g. the profiled optimiser's memory)
        throw new InputException(index, "cannot fit on this index: " + e.getMessage());
      }
      RatioModel model = fit.model();
      String version = versionName != null ? versionName : nextVersion(m);
      double[] scores = new double[(int) m.totalEvents()];
      int threads = settings.threads();
      for (Manifest.Sample s : m.samples()) {
        double[] x = featureMajor(store.columns(s.name(), features));
        double[] f = model.scoreAll(x, (int) s.events(), threads);
        System.arraycopy(f, 0, scores, (int) s.firstRow(), f.length);
      }
      ObjectNode doc = (ObjectNode) Output.JSON.readTree(model.toJson());
      ObjectNode provenance = doc.putObject("provenance");
      provenance.put("tool", "triage " + ToolVersion.get());
      provenance.put("indexId", m.indexId());
      provenance.put("version", version);
      provenance.put("created", Instant.now().truncatedTo(ChronoUnit.SECONDS).toString());
      provenance.put("observedSample", observed);
      provenance.put("observedSha256", m.sample(observed).sha256());
      provenance.put("referenceSample", reference);
      provenance.put("referenceSha256", m.sample(reference).sha256());
      store.addScores(version, scores, Output.JSON.writeValueAsString(doc));
      // + 0.0 turns a −0.0 (a degenerate fit) into 0.0 for printing
      o.say("model %s: t = %.4f, %d parameters, %s after %d iterations (%d loss evaluations), %.1f s", version,
          fit.testStatistic() + 0.0, model.parameterCount(),
          !fit.converged() ? "NOT converged (" + fit.stopReason() + ")"
              : fit.stopReason() == triage.core.ratio.StopReason.LINE_SEARCH_FAILED
              ? "converged (small projected gradient, where the line search could not improve further)"
              : "converged", fit.iterations(), fit.lossEvaluations(), fit.elapsedSeconds());
      if (fit.testStatistic() < 0) {
        o.say("warning: t < 0: the fit ended above the loss of f = 0 (observed and reference alike), so it did not "
            + "minimise the loss (with Adam, a learning rate too large?); this t means nothing.");
      }
      if (!fit.converged()) {
        o.say("note: t is only comparable with toys fitted to the same stopping rule; a fit that did not converge "
            + "understates t.");
      }
      if (m.sample(reference).negativeWeights() > 0) {
        o.say("note: the reference has %d negative weights: where they outweigh the positive ones locally the "
            + "extended loss has no lower bound inside the clip box, and a very large t would only mean that; "
            + "check the events with the largest scores.", m.sample(reference).negativeWeights());
      }
      o.say("scores of every event stored as column score:%s", version);
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "fit");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("version", version);
      result.put("testStatistic", fit.testStatistic());
      result.put("finalLoss", fit.finalLoss());
      result.put("parameters", model.parameterCount());
      result.put("converged", fit.converged());
      result.put("stopReason", fit.stopReason().toString());
      result.put("iterations", fit.iterations());
      result.put("lossEvaluations", fit.lossEvaluations());
      result.put("seconds", fit.elapsedSeconds());
      result.put("startLosses", fit.restartLosses());
      result.put("expectedCount", expected);
      result.put("normalise", normalise);
      result.put("settings", settings);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /** The clip: the number given, the tuned clip for "tuned", else 9 (with a note when a tuned clip exists). */
  private double clip(Output o) throws java.io.IOException {
    Path file = index.resolve(CalibrateCommand.TUNED_CLIP);
    if (model.clip == null) {
      triage.core.calibration.TunedClip tc = java.nio.file.Files.exists(file)
          ? triage.core.calibration.TunedClip.read(file) : null;
      if (tc != null && tc.clip() != 9) {
        o.note("note: clip tuning chose clip %s (%s); this fit uses the default 9 unless given --clip tuned",
            tc.clip(), file);
      }
      return 9;
    }
    if (!model.clip.equals("tuned")) {
      try {
        return Double.parseDouble(model.clip);
      } catch (NumberFormatException e) {
        throw new CommandLine.ParameterException(spec.commandLine(),
            "--clip must be a number or 'tuned', not '" + model.clip + "'");
      }
    }
    triage.core.calibration.TunedClip tc = triage.core.calibration.TunedClip.read(file);
    if (tc == null) {
      throw new InputException(file, "no tuned clip recorded: run triage calibrate --index " + index
          + " --tune-clip --toys N first, or give --clip C");
    }
    String loss = switch (model.loss) {
      case "cross-entropy" -> LossKind.BINARY_CROSS_ENTROPY.toString();
      default -> LossKind.EXTENDED_LIKELIHOOD.toString();
    };
    if (!tc.hiddenWidths().equals(model.layers) || !tc.activation().equals(model.activation.toString())
        || !tc.loss().equals(loss)) {
      throw new InputException(file, String.format(java.util.Locale.ROOT, "the tuned clip %s was chosen for "
          + "layers %s, %s, %s; this fit asks for layers %s, %s, %s, for which it means nothing: tune again "
          + "with a model of this network, or give --clip C", tc.clip(), tc.hiddenWidths(), tc.activation(),
          tc.loss(), model.layers, model.activation, loss));
    }
    o.note("clip %s from clip tuning (%s, model %s, %d toys per clip)", tc.clip(), file, tc.model(),
        tc.toysPerClip());
    return tc.clip();
  }

  private FitSettings settings(double clip) {
    OptimiserKind optimiser = switch (training.optimiser) {
      case "lbfgs" -> OptimiserKind.PROJECTED_LBFGS;
      case "profiled" -> OptimiserKind.PROFILED_LBFGS;
      case "adam" -> OptimiserKind.ADAM;
      default -> throw new CommandLine.ParameterException(spec.commandLine(),
          "--optimiser must be lbfgs, profiled or adam, not '" + training.optimiser + "'");
    };
    LossKind loss = switch (model.loss) {
      case "extended" -> LossKind.EXTENDED_LIKELIHOOD;
      case "cross-entropy" -> LossKind.BINARY_CROSS_ENTROPY;
      default -> throw new CommandLine.ParameterException(spec.commandLine(),
          "--loss must be extended or cross-entropy, not '" + model.loss + "'");
    };
    try {
      FitSettings s = FitSettings.defaults().withHiddenWidths(model.layers).withActivation(model.activation)
          .withLoss(loss).withClip(clip).withSeed(training.seed).withOptimiser(optimiser)
          .withRestarts(training.starts).withAdamEpochs(training.epochs)
          .withAdamLearningRate(training.learningRate)
          .withStoppingRule(StoppingRule.defaults().withMaxIterations(training.maxIterations)
              .withRelativeTolerance(training.tolerance).withGradientTolerance(training.gradientTolerance));
      return training.threads == null ? s : s.withThreads(training.threads);
    } catch (IllegalArgumentException e) {
      throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
    }
  }

  /** Feature-major flattening: value of feature k for event i at k·n + i. */
  static double[] featureMajor(double[][] columns) {
    int n = columns.length == 0 ? 0 : columns[0].length;
    double[] out = new double[columns.length * n];
    for (int k = 0; k < columns.length; k++) {
      System.arraycopy(columns[k], 0, out, k * n, n);
    }
    return out;
  }

  private static String nextVersion(Manifest m) {
    for (int i = 1; ; i++) {
      if (m.model("m" + i) == null) {
        return "m" + i;
      }
    }
  }

}
