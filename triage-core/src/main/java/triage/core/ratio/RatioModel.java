package triage.core.ratio;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;

/**
 * A fitted density-ratio model: f(x) = offset + net((x − mean) / std), an estimate of
 * log[n_obs(x) / n_ref(x)] with both densities normalised to their expected counts.
 *
 * <p>Immutable. Scoring uses the same per-event arithmetic as the training kernels (fma chains,
 * {@link FastExp}), so {@link #score}, {@link #scoreAll} and the values seen in training agree bit
 * for bit, for any thread count. {@link #gradient} returns ∂f/∂x_k in the original units:
 * (∂net/∂z_k) / std_k, by back-propagation through the network.
 *
 * <p>{@link #toJson()} writes every double with the shortest representation that round-trips
 * ({@link Double#toString}) and {@link #fromJson} parses with {@link Double#parseDouble}, so a
 * reloaded model has identical parameters and scores bit-identically.
 */
public final class RatioModel {
  /** Format tag written to JSON. */
  public static final String FORMAT = "triage-density-ratio-model";
  /** Format version written to JSON. */
  public static final int VERSION = 1;
  /** Events per parallel scoring block. */
  private static final int BLOCK = 4096;
  /** Shared JSON mapper (thread-safe once configured). */
  private static final ObjectMapper MAPPER = new ObjectMapper()
      .enable(SerializationFeature.INDENT_OUTPUT)
      .enable(DeserializationFeature.FAIL_ON_NULL_FOR_PRIMITIVES);

  /** Network shape. */
  private final Architecture architecture;
  /** Parameters θ in the layout of {@link Architecture}. */
  private final double[] parameters;
  /** Input standardisation. */
  private final Standardisation standardisation;
  /** Constant added to the network output (log(N_obs/N_exp) for cross entropy, else 0). */
  private final double outputOffset;
  /** Feature names. */
  private final List<String> featureNames;
  /** How the model was fitted, or null. */
  private final TrainingSummary training;

  /**
   * Validates and copies.
   *
   * @param architecture    network shape
   * @param parameters      θ, length {@code architecture.parameterCount()}, finite
   * @param standardisation input standardisation with one entry per input
   * @param outputOffset    constant added to the output, finite
   * @param featureNames    one name per input
   * @param training        fit summary, may be null
   */
  public RatioModel(Architecture architecture, double[] parameters,
           Standardisation standardisation, double outputOffset,
           List<String> featureNames, TrainingSummary training) {
    if (parameters.length != architecture.parameterCount()) {
      throw new IllegalArgumentException("expected " + architecture.parameterCount()
          + " parameters, got " + parameters.length);
    }
    for (double p : parameters) {
      if (!Double.isFinite(p)) {
        throw new IllegalArgumentException("non-finite parameter");
      }
    }
    if (standardisation.features() != architecture.inputs()
        || featureNames.size() != architecture.inputs()) {
      throw new IllegalArgumentException("standardisation / feature names do not match inputs");
    }
    if (!Double.isFinite(outputOffset)) {
      throw new IllegalArgumentException("non-finite output offset");
    }
    this.architecture = architecture;
    this.parameters = parameters.clone();
    this.standardisation = standardisation;
    this.outputOffset = outputOffset;
    this.featureNames = List.copyOf(featureNames);
    this.training = training;
  }

  /** Network shape. */
  public Architecture architecture() {
    return architecture;
  }

  /** Copy of θ. */
  public double[] parameters() {
    return parameters.clone();
  }

  /** Number of parameters P. */
  public int parameterCount() {
    return parameters.length;
  }

  /** Input standardisation. */
  public Standardisation standardisation() {
    return standardisation;
  }

  /** Constant added to the network output. */
  public double outputOffset() {
    return outputOffset;
  }

  /** Feature names. */
  public List<String> featureNames() {
    return featureNames;
  }

  /** Fit summary, or null for a model built by hand. */
  public TrainingSummary training() {
    return training;
  }

  /** Number of inputs d. */
  public int features() {
    return architecture.inputs();
  }

  /** f(x) for one event in original units (length d). */
  public double score(double[] x) {
    requireLength(x.length);
    Evaluator ev = new Evaluator();
    for (int k = 0; k < x.length; k++) {
      ev.input[k] = standardisation.apply(k, x[k]);
    }
    return ev.forward();
  }

  /** ∂f/∂x_k for one event, in original units. */
  public double[] gradient(double[] x) {
    requireLength(x.length);
    Evaluator ev = new Evaluator();
    for (int k = 0; k < x.length; k++) {
      ev.input[k] = standardisation.apply(k, x[k]);
    }
    ev.forward();
    double[] out = new double[x.length];
    ev.inputGradient(out, 0, 1);
    return out;
  }

  /**
   * f for many events, feature-major input (feature k of event i at {@code k·nEvents + i}).
   *
   * @param featureMajor values, length d·nEvents
   * @param nEvents      number of events
   * @param threads      worker threads ≥ 1 (the result does not depend on it)
   */
  public double[] scoreAll(double[] featureMajor, int nEvents, int threads) {
    double[] out = new double[nEvents];
    scoreAll(featureMajor, nEvents, out, threads);
    return out;
  }

  /** As {@link #scoreAll(double[], int, int)}, into {@code out} (length ≥ nEvents). */
  public void scoreAll(double[] featureMajor, int nEvents, double[] out, int threads) {
    checkBulk(featureMajor, nEvents, out.length, nEvents);
    parallel(nEvents, threads, (from, to) -> {
      Evaluator ev = new Evaluator();
      int d = features();
      for (int i = from; i < to; i++) {
        for (int k = 0; k < d; k++) {
          ev.input[k] = standardisation.apply(k, featureMajor[k * nEvents + i]);
        }
        out[i] = ev.forward();
      }
    });
  }

  /**
   * ∂f/∂x_k for many events; output feature-major like the input ({@code out[k·nEvents + i]}).
   */
  public double[] gradientAll(double[] featureMajor, int nEvents, int threads) {
    double[] out = new double[features() * nEvents];
    gradientAll(featureMajor, nEvents, out, threads);
    return out;
  }

  /** As {@link #gradientAll(double[], int, int)}, into {@code out} (length ≥ d·nEvents). */
  public void gradientAll(double[] featureMajor, int nEvents, double[] out, int threads) {
    checkBulk(featureMajor, nEvents, out.length, (long) features() * nEvents);
    parallel(nEvents, threads, (from, to) -> {
      Evaluator ev = new Evaluator();
      int d = features();
      for (int i = from; i < to; i++) {
        for (int k = 0; k < d; k++) {
          ev.input[k] = standardisation.apply(k, featureMajor[k * nEvents + i]);
        }
        ev.forward();
        ev.inputGradient(out, i, nEvents);
      }
    });
  }

  private void requireLength(int length) {
    if (length != features()) {
      throw new IllegalArgumentException("expected " + features() + " features, got " + length);
    }
  }

  private void checkBulk(double[] in, int nEvents, int outLength, long required) {
    if (nEvents < 0 || in.length != (long) features() * nEvents || outLength < required) {
      throw new IllegalArgumentException("bulk array sizes do not match " + nEvents + " events");
    }
    if (required > Integer.MAX_VALUE) {
      throw new IllegalArgumentException("too many events");
    }
  }

  /** Range task. */
  private interface RangeTask {
    void run(int from, int to);
  }

  private static void parallel(int nEvents, int threads, RangeTask task) {
    if (threads < 1) {
      throw new IllegalArgumentException("threads must be >= 1");
    }
    int blocks = (nEvents + BLOCK - 1) / BLOCK;
    if (threads == 1 || blocks <= 1) {
      task.run(0, nEvents);
      return;
    }
    int workers = Math.min(threads, blocks);
    try (ExecutorService pool = Executors.newFixedThreadPool(workers, r -> {
      Thread t = new Thread(r, "ratio-score");
      t.setDaemon(true);
      return t;
    })) {
      List<Future<?>> futures = new ArrayList<>();
      for (int b = 0; b < blocks; b++) {
        int from = b * BLOCK;
        int to = Math.min(nEvents, from + BLOCK);
        futures.add(pool.submit(() -> task.run(from, to)));
      }
      for (Future<?> f : futures) {
        f.get();
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted while scoring", e);
    } catch (ExecutionException e) {
      throw new IllegalStateException("scoring failed", e.getCause());
    }
  }

  /** Per-thread scratch for one event: activations of every layer. */
  private final class Evaluator {
    /** Standardised input. */
    final double[] input = new double[architecture.inputs()];
    /** Activations of hidden layer l at act[l−1]. */
    final double[][] act;
    /** Back-propagated sensitivities per hidden layer. */
    final double[][] delta;

    Evaluator() {
      int hidden = architecture.hiddenWidths().size();
      act = new double[hidden][];
      delta = new double[hidden][];
      for (int l = 1; l <= hidden; l++) {
        act[l - 1] = new double[architecture.width(l)];
        delta[l - 1] = new double[architecture.width(l)];
      }
    }

    /** Forward pass with the kernels' operation order; returns f. */
    double forward() {
      int hidden = act.length;
      Activation a = architecture.activation();
      double[] in = input;
      for (int l = 1; l <= hidden; l++) {
        int nin = architecture.width(l - 1);
        int wo = architecture.weightOffset(l);
        int bo = architecture.biasOffset(l);
        double[] out = act[l - 1];
        for (int j = 0; j < out.length; j++) {
          double z = parameters[bo + j];
          for (int k = 0; k < nin; k++) {
            z = Math.fma(parameters[wo + j * nin + k], in[k], z);
          }
          out[j] = a.apply(z);
        }
        in = out;
      }
      int lo = hidden + 1;
      int wo = architecture.weightOffset(lo);
      double f = parameters[architecture.biasOffset(lo)];
      for (int j = 0; j < in.length; j++) {
        f = Math.fma(parameters[wo + j], in[j], f);
      }
      return f + outputOffset;
    }

    /** After {@link #forward}: writes ∂f/∂x_k to out[offset + k·stride]. */
    void inputGradient(double[] out, int offset, int stride) {
      int hidden = act.length;
      Activation a = architecture.activation();
      int d = architecture.inputs();
      int lo = hidden + 1;
      int wo = architecture.weightOffset(lo);
      if (hidden == 0) {
        for (int k = 0; k < d; k++) {
          out[offset + k * stride] = parameters[wo + k] / standardisation.stdAt(k);
        }
        return;
      }
      double[] dl = delta[hidden - 1];
      for (int j = 0; j < dl.length; j++) {
        dl[j] = parameters[wo + j] * a.derivativeFromValue(act[hidden - 1][j]);
      }
      for (int l = hidden; l >= 2; l--) {
        int nin = architecture.width(l - 1);
        int w = architecture.weightOffset(l);
        double[] dcur = delta[l - 1];
        double[] dprev = delta[l - 2];
        for (int k = 0; k < nin; k++) {
          double s = 0;
          for (int j = 0; j < dcur.length; j++) {
            s = Math.fma(parameters[w + j * nin + k], dcur[j], s);
          }
          dprev[k] = s * a.derivativeFromValue(act[l - 2][k]);
        }
      }
      int w1 = architecture.weightOffset(1);
      double[] d1 = delta[0];
      for (int k = 0; k < d; k++) {
        double s = 0;
        for (int j = 0; j < d1.length; j++) {
          s = Math.fma(parameters[w1 + j * d + k], d1[j], s);
        }
        out[offset + k * stride] = s / standardisation.stdAt(k);
      }
    }
  }

  /** JSON document layout. */
  private record Document(String format, int version, List<String> featureNames,
              Architecture architecture, int parameterCount, double[] parameters,
              Standardisation standardisation, double outputOffset,
              TrainingSummary training) {
  }

  /** The model and its training summary as an indented JSON document. */
  public String toJson() {
    try {
      return MAPPER.writeValueAsString(new Document(FORMAT, VERSION, featureNames,
          architecture, parameters.length, parameters, standardisation, outputOffset,
          training));
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("cannot serialise model", e);
    }
  }

  /** Reads a document written by {@link #toJson()}; validates format, version and sizes. */
  public static RatioModel fromJson(String json) {
    Document doc;
    try {
      doc = MAPPER.readValue(json, Document.class);
    } catch (JsonProcessingException e) {
      throw new IllegalArgumentException("not a valid model document: " + e.getOriginalMessage(), e);
    }
    if (!FORMAT.equals(doc.format()) || doc.version() != VERSION) {
      throw new IllegalArgumentException("unsupported model format " + doc.format() + " v"
          + doc.version());
    }
    if (doc.parameters() == null || doc.parameterCount() != doc.parameters().length) {
      throw new IllegalArgumentException("parameter count does not match");
    }
    if (doc.architecture() == null || doc.standardisation() == null || doc.featureNames() == null) {
      throw new IllegalArgumentException("the model document lacks "
          + (doc.architecture() == null ? "'architecture'" : doc.standardisation() == null ? "'standardisation'"
          : "'featureNames'"));
    }
    return new RatioModel(doc.architecture(), doc.parameters(), doc.standardisation(),
        doc.outputOffset(), doc.featureNames(), doc.training());
  }

  @Override
  public String toString() {
    return "RatioModel[" + architecture + ", P=" + parameters.length + ", offset=" + outputOffset
        + ", params=" + Arrays.toString(Arrays.copyOf(parameters, Math.min(4, parameters.length)))
        + "...]";
  }
}
