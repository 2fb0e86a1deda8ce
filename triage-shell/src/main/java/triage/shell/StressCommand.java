package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.ratio.RatioModel;
import triage.core.region.Stress;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.core.sample.ScaleShift;
import triage.core.select.Expr;
import triage.core.select.Where;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;

/** {@code triage stress}: does the excess survive the systematics? */
@Command(name = "stress", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Stress a selection's excess with the systematics: the expected reference yield at ±1σ of each "
        + "systematic of the spec (up/down weight columns, and scale shifts of features, for which the reference "
        + "events are scaled, re-scored by the model when the selection uses a score, and selected again), the "
        + "significance with the MC statistical and systematic uncertainties folded in, and per systematic the "
        + "pull, in its own σ, that alone would explain the excess away.",
        "Systematics add in quadrature, each with the larger of its two shifts; pulls extrapolate linearly past 1σ. "
            + "The significance is local, and biased upwards where the selection was tuned on these data."},
    footer = ExitCodes.FOOTER)
public final class StressCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** The condition. */
  @Option(names = "--where", required = true, paramLabel = "CONDITION", description = "The selection.")
  String where;

  /** Extra scale shifts. */
  @Option(names = "--scale", paramLabel = "NAME=FEATURE[,FEATURE…]:RELATIVE",
      description = "A scale shift besides the spec's, e.g. jet_scale_check=pt_j:0.02 (repeatable).")
  List<String> scales = new ArrayList<>();

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      List<ScaleShift> shifts = new ArrayList<>(m.spec().scales());
      for (String s : scales) {
        ScaleShift extra = parseScale(s, m.spec().columns().features());
        // A clash with the index's own systematics needs the index to see (invalid input, 3); one between two
        // --scale options is plain from the command line (usage, 2): docs/json.md.
        if (m.spec().scales().stream().anyMatch(x -> x.name().equals(extra.name()))
            || m.spec().variations().stream().anyMatch(v -> v.name().equals(extra.name()))) {
          throw new InputException(index, "--scale '" + s + "': the name '" + extra.name() + "' is already a "
              + "systematic of the index's spec; choose another name");
        }
        if (shifts.stream().anyMatch(x -> x.name().equals(extra.name()))) {
          throw new CommandLine.ParameterException(spec.commandLine(), "--scale '" + s + "': the name '"
              + extra.name() + "' is given by another --scale too; choose another name");
        }
        shifts.add(extra);
      }
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      Map<String, Where.Kind> kinds = store.kinds();
      Expr condition = Where.parse(where, kinds);
      List<SampleSums> sums = store.sums(store.where(where));
      SampleSums n = sums.get(ordinal(m, observed));
      SampleSums b = sums.get(ordinal(m, reference));
      List<Stress.Shift> effects = new ArrayList<>();
      for (int k = 0; k < m.spec().variations().size(); k++) {
        effects.add(new Stress.Shift(m.spec().variations().get(k).name(), "weights", b.upSums()[k],
            b.downSums()[k]));
      }
      List<String> notes = new ArrayList<>();
      if (!shifts.isEmpty()) {
        ShiftedReference shifted = new ShiftedReference(store, m, reference, Stress.columnsOf(condition, kinds),
            kinds, notes);
        double[] w = store.weights(reference);
        for (ScaleShift s : shifts) {
          double up = Stress.yield(condition, kinds, shifted.numbers(s, 1 + s.relative()), shifted.categories, w)[0];
          double down = Stress.yield(condition, kinds, shifted.numbers(s, 1 - s.relative()), shifted.categories,
              w)[0];
          effects.add(new Stress.Shift(s.name(), "scale", up, down));
        }
      }
      Stress.Result r = Stress.summarise(n.count(), b.sumOfWeights(), b.statisticalError(), effects);
      o.say("selection  %s", where);
      o.say("observed %d, expected %.4g ± %.2g (MC stat.) ± %.2g (syst.) = ± %.2g; excess %+.4g", r.observed(),
          r.expected(), r.statError(), r.systError(), r.totalError(), r.observed() - r.expected());
      if (r.positiveYield()) {
        o.say("local Z_Bi  %.2f with MC statistics only, %.2f with the systematics folded in", r.zStatOnly(),
            r.zWithSystematics());
      } else {
        o.say("local Z_Bi  none: the expected yield is not positive");
      }
      o.say("");
      o.say("  %-20s %-8s %12s %12s %9s %14s", "systematic", "kind", "expected +1σ", "expected −1σ", "σ (rel.)",
          "pull to explain");
      for (Stress.Row row : r.rows()) {
        o.say("  %-20s %-8s %12.4g %12.4g %9s %14s", row.name(), row.kind(), row.expectedUp(),
            row.expectedDown(), r.positiveYield() ? String.format(java.util.Locale.ROOT, "%.1f%%",
            100 * row.sigma() / r.expected()) : "-", Double.isNaN(row.pullToExplain()) ? "-"
            : Double.isInfinite(row.pullToExplain()) ? "cannot" : String.format(java.util.Locale.ROOT, "%.1fσ",
            row.pullToExplain()));
      }
      o.say("verdict    %s", r.verdict());
      if (!r.positiveYield()) {
        notes.add("the expected yield is not positive (" + String.format(java.util.Locale.ROOT, "%.4g",
            r.expected()) + "): no significance and no pulls, as in select; the ±1σ yields are listed as computed");
      }
      for (String note : notes) {
        o.say("note: %s", note);
      }
      o.say("note: local significance, not corrected for the look-elsewhere effect; biased upwards if the "
          + "selection was tuned on these data. Systematics are taken as uncorrelated and symmetric.");
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "stress");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("where", where);
      result.put("scales", shifts);
      result.put("result", r);
      result.put("notes", notes);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /** The reference columns a condition reads, ready to be scaled and re-scored. */
  private static final class ShiftedReference {
    final Map<String, double[]> nominal = new HashMap<>();
    final Map<String, String[]> categories = new HashMap<>();
    final Map<String, RatioModel> models = new HashMap<>();
    final Map<String, double[]> modelFeatures = new HashMap<>();
    final int n;

    ShiftedReference(EventStore store, Manifest m, String reference, List<String> used, Map<String, Where.Kind> kinds,
        List<String> notes) throws java.io.IOException {
      n = (int) m.sample(reference).events();
      for (String c : used) {
        if (kinds.get(c) == Where.Kind.CATEGORY) {
          categories.put(c, store.categories(reference, List.of(c).get(0)));
          continue;
        }
        nominal.put(c, store.columns(reference, List.of(c))[0]);
        if (c.startsWith("score:")) {
          Manifest.Model mm = m.model(c.substring("score:".length()));
          if (mm != null && mm.modelFile() != null) {
            RatioModel model = ModelFiles.load(store.dir(), mm);
            models.put(c, model);
            for (String f : model.featureNames()) {
              modelFeatures.computeIfAbsent(f, k -> {
                try {
                  return store.columns(reference, List.of(k))[0];
                } catch (java.io.IOException e) {
                  throw new java.io.UncheckedIOException(e);
                }
              });
            }
          } else {
            notes.add(c + " comes from an external score column: it is held fixed under the scale shifts");
          }
        }
      }
    }

    /** The numeric columns with a shift's features scaled and model scores recomputed. */
    Map<String, double[]> numbers(ScaleShift s, double factor) {
      Map<String, double[]> out = new HashMap<>();
      for (var e : nominal.entrySet()) {
        String c = e.getKey();
        RatioModel model = models.get(c);
        if (model != null) {
          List<String> fs = model.featureNames();
          double[] x = new double[fs.size() * n];
          for (int k = 0; k < fs.size(); k++) {
            double[] v = modelFeatures.get(fs.get(k));
            double f = s.features().contains(fs.get(k)) ? factor : 1;
            for (int i = 0; i < n; i++) {
              x[k * n + i] = v[i] * f;
            }
          }
          out.put(c, model.scoreAll(x, n, Runtime.getRuntime().availableProcessors()));
        } else if (s.features().contains(c)) {
          double[] v = e.getValue().clone();
          for (int i = 0; i < v.length; i++) {
            v[i] *= factor;
          }
          out.put(c, v);
        } else {
          out.put(c, e.getValue());
        }
      }
      return out;
    }
  }

  private ScaleShift parseScale(String text, List<String> features) {
    int eq = text.indexOf('=');
    int colon = text.lastIndexOf(':');
    if (eq <= 0 || colon < eq) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--scale must be NAME=FEATURE[,FEATURE...]:"
          + "RELATIVE, e.g. jet_check=pt_j:0.02, not '" + text + "'");
    }
    try {
      List<String> fs = List.of(text.substring(eq + 1, colon).split(","));
      for (String f : fs) {
        if (!features.contains(f)) {
          throw new InputException(index, "--scale '" + text + "': '" + f + "' is not a feature of the index "
              + "(features: " + String.join(", ", features) + ")");
        }
      }
      return new ScaleShift(text.substring(0, eq), fs, Double.parseDouble(text.substring(colon + 1)));
    } catch (IllegalArgumentException e) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--scale '" + text + "': " + e.getMessage());
    }
  }

  private static int ordinal(Manifest m, String sample) {
    for (int i = 0; i < m.samples().size(); i++) {
      if (m.samples().get(i).name().equals(sample)) {
        return i;
      }
    }
    throw new InputException(null, "no sample '" + sample + "'");
  }
}
