package triage.core.region;

import java.io.IOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.HashMap;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import triage.core.ratio.RatioModel;
import triage.core.sample.EventBatch;
import triage.core.sample.EventFileReader;
import triage.core.sample.ReadOptions;
import triage.core.sample.ReadResult;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.ScaleShift;
import triage.core.sample.Variation;
import triage.core.select.Expr;
import triage.core.select.RowTest;
import triage.core.select.ValueSource;
import triage.core.select.Where;
import triage.core.stats.NeumaierSum;

/**
 * Applies a frozen region to sample files, streamed with the same checks as ingest: counts the observed events and
 * sums the reference weights (nominal, squared, per variation, and per scale shift) of the events inside, and
 * collects the observed ids for the overlap guard. No index is needed.
 *
 * <p>A scale shift is evaluated as {@code triage stress} evaluates it: each batch's listed features are multiplied
 * by 1 ± relative, the frozen model (if the condition reads its score) scores the scaled features again, and the
 * condition is tested once more; an external score column is held fixed. A shift that touches no column the
 * condition reads (directly or through the model) leaves the yield as it is and is not re-evaluated.
 */
public final class RegionApplier {
  /**
   * What the region kept in one file.
   *
   * @param read the file's reading report
   * @param events events inside the region
   * @param sumOfWeights Σw inside
   * @param sumOfSquaredWeights Σw² inside
   * @param variations per variation {Σw_up, Σw_down} inside
   * @param scales per scale shift {Σw inside with the features scaled by 1 + relative, by 1 − relative}
   * @param ids every event id of the file (for the overlap guard)
   */
  public record Yield(ReadResult read, long events, double sumOfWeights, double sumOfSquaredWeights,
      Map<String, double[]> variations, Map<String, double[]> scales, long[] ids) {}

  private RegionApplier() {
    // no instance
  }

  /** The column kinds a region's condition may use. */
  public static Map<String, Where.Kind> kinds(Region region) {
    return Region.kinds(region.columns(), region.variations(), region.model());
  }

  /** Applies the region to one sample of a spec whose columns are the region's, without scale shifts. */
  public static Yield apply(Region region, SampleSpec spec, SampleSource source, ReadOptions options)
      throws IOException {
    return apply(region, spec, source, options, List.of());
  }

  /**
   * Applies the region to one sample of a spec whose columns are the region's.
   *
   * @param scales the scale shifts to evaluate (for a weighted sample only; ignored for an observed one)
   */
  public static Yield apply(Region region, SampleSpec spec, SampleSource source, ReadOptions options,
      List<ScaleShift> scales) throws IOException {
    Map<String, Where.Kind> kinds = kinds(region);
    Expr condition = Where.parse(region.where(), kinds);
    List<String> slots = new ArrayList<>();
    RowTest test = Where.compile(condition, kinds, name -> {
      int i = slots.indexOf(name);
      if (i < 0) {
        slots.add(name);
        i = slots.size() - 1;
      }
      return i;
    });
    RatioModel model = region.model() == null ? null : RatioModel.fromJson(region.model().json());
    boolean weighted = source.role().weighted();
    List<Variation> variations = weighted ? spec.variations() : List.of();
    BatchValues values = new BatchValues(spec, slots, variations, model);
    NeumaierSum w = new NeumaierSum();
    NeumaierSum w2 = new NeumaierSum();
    NeumaierSum[] up = new NeumaierSum[variations.size()];
    NeumaierSum[] down = new NeumaierSum[variations.size()];
    for (int j = 0; j < up.length; j++) {
      up[j] = new NeumaierSum();
      down[j] = new NeumaierSum();
    }
    List<ScaleShift> shifts = weighted ? scales : List.of();
    List<String> features = spec.columns().features();
    double[][][] factors = new double[shifts.size()][][];
    for (int j = 0; j < shifts.size(); j++) {
      ScaleShift shift = shifts.get(j);
      if (values.reads(shift.features())) {
        factors[j] = new double[2][features.size()];
        for (int k = 0; k < features.size(); k++) {
          boolean scaled = shift.features().contains(features.get(k));
          factors[j][0][k] = scaled ? 1 + shift.relative() : 1;
          factors[j][1][k] = scaled ? 1 - shift.relative() : 1;
        }
      }
    }
    NeumaierSum[][] shifted = new NeumaierSum[shifts.size()][];
    for (int j = 0; j < shifted.length; j++) {
      shifted[j] = new NeumaierSum[] {new NeumaierSum(), new NeumaierSum()};
    }
    long[] count = {0};
    long[][] ids = {new long[1024]};
    int[] nIds = {0};
    ReadResult read = EventFileReader.read(spec, source, options, batch -> {
      values.load(batch, null);
      for (int i = 0; i < batch.size(); i++) {
        if (nIds[0] == ids[0].length) {
          ids[0] = Arrays.copyOf(ids[0], ids[0].length * 2);
        }
        ids[0][nIds[0]++] = batch.id(i);
        values.at(i);
        if (test.test(values)) {
          count[0]++;
          double weight = batch.weight(i);
          w.add(weight);
          w2.add(weight * weight);
          for (int j = 0; j < up.length; j++) {
            up[j].add(batch.up(i, j));
            down[j].add(batch.down(i, j));
          }
        }
      }
      for (int j = 0; j < shifts.size(); j++) {
        for (int side = 0; factors[j] != null && side < 2; side++) {
          values.load(batch, factors[j][side]);
          for (int i = 0; i < batch.size(); i++) {
            values.at(i);
            if (test.test(values)) {
              shifted[j][side].add(batch.weight(i));
            }
          }
        }
      }
    }, null);
    Map<String, double[]> sums = new LinkedHashMap<>();
    for (int j = 0; j < up.length; j++) {
      sums.put(variations.get(j).name(), new double[] {up[j].value(), down[j].value()});
    }
    Map<String, double[]> scaleSums = new LinkedHashMap<>();
    for (int j = 0; j < shifts.size(); j++) {
      scaleSums.put(shifts.get(j).name(), factors[j] == null ? new double[] {w.value(), w.value()}
          : new double[] {shifted[j][0].value(), shifted[j][1].value()});
    }
    return new Yield(read, count[0], w.value(), w2.value(), sums, scaleSums, Arrays.copyOf(ids[0], nIds[0]));
  }

  /** One batch's values by slot, for the compiled condition. */
  private static final class BatchValues implements ValueSource {
    /** Kind of each slot: 0 feature, 1 id, 2 run, 3 block, 4 score column, 5 up, 6 down, 7 model score, 8 category. */
    private final int[] kind;

    /** Index within its kind (feature number, variation number, category number). */
    private final int[] index;

    /** The frozen model, or null. */
    private final RatioModel model;

    /** For each model input, the feature number in the spec (matched by name). */
    private final int[] modelInputs;

    /** The spec's feature names. */
    private final List<String> features;

    /** The batch. */
    private EventBatch batch;

    /** Per feature the factor it is scaled by, or null when the features are as read. */
    private double[] factor;

    /** Model scores of the batch. */
    private double[] scores = new double[0];

    /** The current event. */
    private int i;

    BatchValues(SampleSpec spec, List<String> slots, List<Variation> variations, RatioModel model) {
      this.model = model;
      features = spec.columns().features();
      modelInputs = model == null ? new int[0] : new int[model.featureNames().size()];
      for (int k = 0; k < modelInputs.length; k++) {
        modelInputs[k] = features.indexOf(model.featureNames().get(k));
        if (modelInputs[k] < 0) {
          throw new IllegalArgumentException("the frozen model reads feature '" + model.featureNames().get(k)
              + "', which the follow-up samples do not have");
        }
      }
      kind = new int[slots.size()];
      index = new int[slots.size()];
      var c = spec.columns();
      Map<String, int[]> where = new HashMap<>();
      for (int k = 0; k < c.features().size(); k++) {
        where.put(c.features().get(k), new int[] {0, k});
      }
      where.put(c.id(), new int[] {1, 0});
      if (c.run() != null) {
        where.put(c.run(), new int[] {2, 0});
      }
      if (c.block() != null) {
        where.put(c.block(), new int[] {3, 0});
      }
      if (c.score() != null) {
        where.put(c.score(), new int[] {4, 0});
        where.put("score:external", new int[] {4, 0});
      }
      for (int j = 0; j < variations.size(); j++) {
        where.put(variations.get(j).up(), new int[] {5, j});
        where.put(variations.get(j).down(), new int[] {6, j});
      }
      for (int k = 0; k < c.categories().size(); k++) {
        where.put(c.categories().get(k), new int[] {8, k});
      }
      for (int s = 0; s < slots.size(); s++) {
        String name = slots.get(s);
        int[] place = name.startsWith("score:") && !where.containsKey(name) ? new int[] {7, 0} : where.get(name);
        if (place == null) {
          throw new triage.core.sample.InputException(null, "the region uses column '" + name
              + "', which the follow-up " + (name.startsWith("w") ? "sample (an observed one?) " : "files ")
              + "do not have");
        }
        kind[s] = place[0];
        index[s] = place[1];
      }
    }

    /** Whether the condition reads any of these features, directly or through the frozen model's score. */
    boolean reads(List<String> scaled) {
      for (int s = 0; s < kind.length; s++) {
        if (kind[s] == 0 && scaled.contains(features.get(index[s]))) {
          return true;
        }
        if (kind[s] == 7 && model.featureNames().stream().anyMatch(scaled::contains)) {
          return true;
        }
      }
      return false;
    }

    /**
     * Takes a batch, with every feature multiplied by its factor (null: as read), and scores it with the model.
     */
    void load(EventBatch b, double[] scale) {
      batch = b;
      factor = scale;
      if (model != null) {
        int n = b.size();
        int nf = modelInputs.length;
        double[] x = new double[nf * n];
        for (int e = 0; e < n; e++) {
          for (int k = 0; k < nf; k++) {
            x[k * n + e] = b.feature(e, modelInputs[k]) * (scale == null ? 1 : scale[modelInputs[k]]);
          }
        }
        scores = model.scoreAll(x, n, 1);
      }
    }

    void at(int event) {
      i = event;
    }

    @Override
    public double number(int slot) {
      return switch (kind[slot]) {
        case 0 -> batch.feature(i, index[slot]) * (factor == null ? 1 : factor[index[slot]]);
        case 1 -> batch.id(i);
        case 2 -> batch.run(i);
        case 3 -> batch.block(i);
        case 4 -> batch.score(i);
        case 5 -> batch.up(i, index[slot]);
        case 6 -> batch.down(i, index[slot]);
        default -> scores[i];
      };
    }

    @Override
    public String category(int slot) {
      return batch.category(i, index[slot]);
    }
  }
}
