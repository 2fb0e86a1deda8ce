package triage.core.region;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.List;
import java.util.Map;
import triage.core.sample.Columns;
import triage.core.sample.InputException;
import triage.core.sample.Variation;

/**
 * A frozen signal region ({@code triage-region/1}; fields in {@code docs/region.md}): the selection as a WHERE
 * condition over the input columns (and, for a score region, the frozen model that computes {@code score:VERSION}),
 * its box cuts for other frameworks, the discovery yields with the local significance marked as optimised on the
 * discovery data, provenance, and the discovery observed events' ids so the follow-up can refuse reused events.
 *
 * @param format {@value #FORMAT}
 * @param name a name for people
 * @param where the condition, in SQL WHERE syntax
 * @param cuts the condition's box part (closed ranges), for frameworks that apply cuts; see {@code residual}
 * @param residual the part of the condition that is not a box, or null
 * @param columns the columns the condition may use (from the discovery spec)
 * @param variations the systematic variations (weight column pairs)
 * @param model the frozen model, when the condition uses its score, or null
 * @param discovery the discovery yields
 * @param provenance where the region comes from
 * @param discoveryIds the ids of the discovery observed events
 * @param cautions the cautions that travel with the region
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Region(String format, String name, String where, List<Cut> cuts, String residual, Columns columns,
    List<Variation> variations, Model model, Discovery discovery, Provenance provenance, IdSet discoveryIds,
    List<String> cautions) {

  /** The format this version reads and writes. */
  public static final String FORMAT = "triage-region/1";

  /** Reads and writes region files. */
  private static final ObjectMapper MAPPER = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT)
      .disable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES);

  /** A closed range cut lo ≤ x ≤ hi (±Infinity written as null). */
  public record Cut(String column, Double lo, Double hi) {}

  /**
   * The frozen model.
   *
   * @param version its version in the discovery index
   * @param sha256 SHA-256 of {@code json}
   * @param json the model description (architecture, parameters, standardisation, training, provenance)
   */
  public record Model(String version, String sha256, String json) {}

  /**
   * Yields on the discovery data.
   *
   * @param observed n_d
   * @param expected b_d
   * @param expectedStatError √Σw²
   * @param expectedSystError per variation the larger shift |b_up − b| or |b_down − b|, added in quadrature
   * @param variations per variation {up, down}
   * @param localZBi the local Z_Bi (MC statistical error only)
   * @param optimisedOnDiscoveryData always true: the region was chosen on these data, so this significance is
   *     biased upwards
   */
  public record Discovery(long observed, double expected, double expectedStatError, double expectedSystError,
      Map<String, double[]> variations, double localZBi, boolean optimisedOnDiscoveryData) {}

  /**
   * Where the region comes from.
   *
   * @param tool tool and version
   * @param created when (ISO-8601 UTC)
   * @param indexId the discovery index's id
   * @param inputs the discovery inputs
   * @param seeds the seeds behind the region (e.g. the frozen model's fit seed)
   */
  public record Provenance(String tool, String created, String indexId, List<Input> inputs,
      Map<String, Long> seeds) {}

  /** One discovery input file. */
  public record Input(String sample, String role, String file, String sha256) {}

  /** Checks the format. */
  public Region {
    if (!FORMAT.equals(format)) {
      throw new IllegalArgumentException("region format '" + format + "' is not known to this version (it reads '"
          + FORMAT + "')");
    }
    if (name == null || where == null || columns == null || discovery == null || discoveryIds == null) {
      throw new IllegalArgumentException("a region needs 'name', 'where', 'columns', 'discovery' and "
          + "'discoveryIds'");
    }
    if (cuts != null) {
      java.util.Set<String> known = new java.util.LinkedHashSet<>(columns.all());
      if (variations != null) {
        for (Variation v : variations) {
          known.add(v.up());
          known.add(v.down());
        }
      }
      if (model != null) {
        known.add("score:" + model.version());
      }
      if (columns.score() != null) {
        known.add("score:external");
      }
      for (Cut c : cuts) {
        if (c == null || !known.contains(c.column())) {
          throw new IllegalArgumentException("cut on " + (c == null ? "nothing" : "'" + c.column() + "'")
              + ": not one of the region's columns " + known);
        }
        if (c.lo() != null && c.hi() != null && !(c.lo() <= c.hi())) {
          throw new IllegalArgumentException("cut on '" + c.column() + "' has lo " + c.lo() + " above hi " + c.hi());
        }
      }
    }
    if (model != null) {
      checkModel(model, columns);
    }
  }

  /**
   * The frozen model must be the one that was frozen (its SHA-256) and must read the region's feature columns: a
   * region file edited after freezing must not silently score events another way.
   */
  private static void checkModel(Model model, Columns columns) {
    if (model.json() == null || model.sha256() == null || model.version() == null) {
      throw new IllegalArgumentException("the frozen model needs 'version', 'sha256' and 'json'");
    }
    String sha = triage.core.provenance.Fingerprints.sha256(model.json().getBytes(
        java.nio.charset.StandardCharsets.UTF_8));
    if (!sha.equals(model.sha256())) {
      throw new IllegalArgumentException("the frozen model's SHA-256 does not match its text (was the region file "
          + "edited after it was frozen?)");
    }
    triage.core.ratio.RatioModel m;
    try {
      m = triage.core.ratio.RatioModel.fromJson(model.json());
    } catch (RuntimeException e) {
      throw new IllegalArgumentException("the frozen model cannot be read: " + e.getMessage());
    }
    for (String f : m.featureNames()) {
      if (!columns.features().contains(f)) {
        throw new IllegalArgumentException("the frozen model reads feature '" + f + "', which is not among the "
            + "region's feature columns " + columns.features());
      }
    }
  }

  /** Writes the region as JSON. */
  public void write(Path file) throws IOException {
    Files.writeString(file, MAPPER.writeValueAsString(this) + "\n");
  }

  /** Reads a region file. */
  public static Region read(Path file) {
    try {
      return MAPPER.readValue(Files.readString(file), Region.class);
    } catch (NoSuchFileException e) {
      throw new InputException(file, "region file not found");
    } catch (JsonProcessingException e) {
      Throwable root = e;
      while (root.getCause() != null) {
        root = root.getCause();
      }
      var at = e.getLocation();
      throw new InputException(file, at == null ? 0 : at.getLineNr(), at == null ? 0 : at.getColumnNr(),
          "not a valid region file: " + (root instanceof IllegalArgumentException ? root.getMessage()
              : e.getOriginalMessage()), null);
    } catch (IOException e) {
      throw new InputException(file, 0, 0, "cannot read the region file: " + e.getMessage(), e);
    }
  }
}
