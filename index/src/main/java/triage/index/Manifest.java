package triage.index;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import triage.core.sample.Role;
import triage.core.sample.SampleSpec;

/**
 * What an index holds, recorded atomically with each commit: the schema, per-sample counts and weight sums,
 * input fingerprints, the tool and format versions, and the model versions whose scores it carries.
 * Its fields are listed in {@code docs/json.md}.
 *
 * @param format the index format: {@value #FORMAT} when written by this version, or an older one it still reads
 *     ({@link #READABLE})
 * @param indexId a random id fixed at ingest
 * @param tool the tool and version that wrote the index
 * @param created when the ingest finished (ISO-8601, UTC)
 * @param spec the sample spec ingested, files as given
 * @param columns every column, in order
 * @param samples per-sample facts, in ingest order
 * @param models model versions with score columns, oldest first
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Manifest(String format, String indexId, String tool, String created, SampleSpec spec,
    List<Column> columns, List<Sample> samples, List<Model> models) {

  /**
   * The index format this version writes: each event's binary form kept once, as binary doc values, and float
   * points (checked exactly against the binary form) for double columns, in segments of the index's own codec
   * (Lucene's files, with point trees sorted another way at flush; older versions cannot open them).
   */
  public static final String FORMAT = "triage-index/3";

  /**
   * The formats this version reads: 1 had double points and also kept the binary form as a stored field (no
   * longer read); 2 is format 3 written with Lucene's default codec.
   */
  public static final List<String> READABLE = List.of("triage-index/1", "triage-index/2", FORMAT);

  /** Reads and writes manifests; tolerant of fields added by later minor versions. */
  static final ObjectMapper MAPPER = new ObjectMapper()
      .disable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
      .enable(SerializationFeature.INDENT_OUTPUT);

  /**
   * One column of the index.
   *
   * @param name the column's name (as in the input header)
   * @param kind what it holds
   */
  public record Column(String name, ColumnKind kind) {
    /** Checks that both parts are present. */
    public Column {
      if (name == null || kind == null) {
        throw new IllegalArgumentException("a column needs a name and a kind");
      }
    }
  }

  /**
   * Facts about one sample, fixed at ingest.
   *
   * @param name the sample's name
   * @param role its role
   * @param file the file read, as given in the spec
   * @param sha256 SHA-256 of the file's bytes
   * @param rowsRead data rows read
   * @param rowsRejected rows set aside
   * @param events events indexed (rowsRead − rowsRejected)
   * @param firstRow the index-wide row number of the sample's first event; its events have rows
   *     firstRow … firstRow + events − 1
   * @param sumOfWeights Σ w
   * @param sumOfSquaredWeights Σ w²
   * @param negativeWeights events with w &lt; 0
   * @param zeroWeights events with w = 0
   * @param featureMeans weighted mean per feature
   * @param featureSds weighted population standard deviation per feature
   * @param categories the distinct values of each category column
   * @param variationSums Σ w_up and Σ w_down per variation
   */
  public record Sample(String name, Role role, String file, String sha256, long rowsRead, long rowsRejected,
      long events, long firstRow, double sumOfWeights, double sumOfSquaredWeights, long negativeWeights,
      long zeroWeights, Map<String, Double> featureMeans, Map<String, Double> featureSds,
      Map<String, List<String>> categories, Map<String, double[]> variationSums) {
    /** Checks that counts reconcile and are not negative. */
    public Sample {
      if (events < 0 || rowsRejected < 0 || firstRow < 0) {
        throw new IllegalArgumentException("sample '" + name + "' has negative counts");
      }
      if (rowsRead != events + rowsRejected) {
        throw new IllegalArgumentException("sample '" + name + "': rows read " + rowsRead + " != events " + events
            + " + rejected " + rowsRejected);
      }
    }
  }

  /**
   * A model version whose per-event scores the index carries.
   *
   * @param version the version name, e.g. {@code m1}
   * @param source where the scores live: {@code column} (read at ingest) or {@code file} (written later)
   * @param scoreFile the score file inside the index folder, for source {@code file}
   * @param sha256 SHA-256 of the score file
   * @param modelFile the model description inside the index folder, or null
   * @param created when the scores were added
   */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public record Model(String version, String source, String scoreFile, String sha256, String modelFile,
      String created) {
    /** Checks that the version is named. */
    public Model {
      if (version == null || version.isEmpty()) {
        throw new IllegalArgumentException("a model needs a version");
      }
    }
  }

  /** Checks the format and fills empty lists. */
  public Manifest {
    if (!READABLE.contains(format)) {
      throw new IllegalArgumentException("index format '" + format + "' is not known to this version (it reads '"
          + String.join("', '", READABLE) + "')");
    }
    columns = List.copyOf(columns);
    samples = List.copyOf(samples);
    models = models == null ? List.of() : List.copyOf(models);
  }

  /** The sample with this name, or null. */
  public Sample sample(String name) {
    for (Sample s : samples) {
      if (s.name().equals(name)) {
        return s;
      }
    }
    return null;
  }

  /** The column with this name, or null. */
  public Column column(String name) {
    for (Column c : columns) {
      if (c.name().equals(name)) {
        return c;
      }
    }
    return null;
  }

  /**
   * Why a model version name cannot be used, or null when it can: 1 to 64 letters, digits, '_', '.' or '-', not
   * starting with '.' or '-', and not {@code external} (the name of a score column read at ingest).
   */
  public static String versionNameProblem(String version) {
    if (version == null || !version.matches("[A-Za-z0-9_][A-Za-z0-9_.-]{0,63}") || version.equals("external")) {
      return "model version '" + version + "' must be 1-64 letters, digits, '_', '.', '-', start with a letter, "
          + "digit or '_', and not be 'external'";
    }
    return null;
  }

  /** The model with this version, or null. */
  public Model model(String version) {
    for (Model m : models) {
      if (m.version().equals(version)) {
        return m;
      }
    }
    return null;
  }

  /** Total events over all samples. */
  public long totalEvents() {
    long n = 0;
    for (Sample s : samples) {
      n += s.events();
    }
    return n;
  }

  /** The same manifest with one more model. */
  public Manifest withModel(Model model) {
    List<Model> more = new ArrayList<>(models);
    more.removeIf(m -> m.version().equals(model.version()));
    more.add(model);
    return new Manifest(format, indexId, tool, created, spec, columns, samples, more);
  }

  /** The manifest as indented JSON. */
  public String toJson() {
    try {
      return MAPPER.writeValueAsString(this);
    } catch (JsonProcessingException e) {
      throw new IllegalStateException(e);
    }
  }

  /** Parses a manifest. */
  public static Manifest fromJson(String json) throws JsonProcessingException {
    return MAPPER.readValue(json, Manifest.class);
  }
}
