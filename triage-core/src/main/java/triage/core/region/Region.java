package triage.core.region;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonParseException;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonPointer;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonMappingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import com.fasterxml.jackson.databind.exc.MismatchedInputException;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Map;
import java.util.Set;
import triage.core.inference.CountingSignificance;
import triage.core.sample.Columns;
import triage.core.sample.InputException;
import triage.core.sample.ScaleShift;
import triage.core.sample.Variation;
import triage.core.select.Expr;
import triage.core.select.Plan;
import triage.core.select.Where;
import triage.core.select.WhereException;

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
 * @param scales the discovery spec's scale systematics (relative shifts of features); null in files written before
 *     they were recorded
 * @param model the frozen model, when the condition uses its score, or null
 * @param discovery the discovery yields
 * @param provenance where the region comes from
 * @param discoveryIds the ids of the discovery observed events
 * @param cautions the cautions that travel with the region
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Region(String format, String name, String where, List<Cut> cuts, String residual, Columns columns,
    List<Variation> variations, List<ScaleShift> scales, Model model, Discovery discovery, Provenance provenance,
    IdSet discoveryIds, List<String> cautions) {

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

  /**
   * One discovery input file.
   *
   * @param sample the sample's name in the discovery index
   * @param role its role ({@code reference}, {@code observed}, …)
   * @param file the file as given at ingest
   * @param sha256 SHA-256 of the file
   * @param weight its weight column, or null when its events weigh one (and in files written before it was
   *     recorded)
   */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public record Input(String sample, String role, String file, String sha256, String weight) {}

  /**
   * A region field that is missing, wrong, or inconsistent with another: the field as a JSON pointer (e.g.
   * {@code /cuts/0/lo}), so that reading can say where in the file it is.
   */
  public static final class FieldException extends IllegalArgumentException {
    private static final long serialVersionUID = 1L;

    /** The field, as a JSON pointer ("" for the whole file). */
    private final String pointer;

    /**
     * A problem with one field.
     *
     * @param pointer the field as a JSON pointer
     * @param message what is wrong (the field's name is put in front)
     */
    public FieldException(String pointer, String message) {
      super("field '" + display(pointer) + "': " + message);
      this.pointer = pointer;
    }

    /** The field, as a JSON pointer. */
    public String pointer() {
      return pointer;
    }
  }

  /**
   * Checks the format, the required fields, the cuts against the condition (they must be the box part that
   * {@code where} compiles to), the scale systematics, the frozen model, and the discovery yields where they can be
   * recomputed from one another; each failure names its field ({@link FieldException}).
   */
  public Region {
    if (!FORMAT.equals(format)) {
      throw new FieldException("/format", "region format '" + format + "' is not known to this version (it reads '"
          + FORMAT + "')");
    }
    for (var required : new Object[][] {{"name", name}, {"where", where}, {"cuts", cuts}, {"columns", columns},
        {"discovery", discovery}, {"discoveryIds", discoveryIds}}) {
      if (required[1] == null) {
        throw new FieldException("/" + required[0], "missing: a region needs 'name', 'where', 'cuts', 'columns', "
            + "'discovery' and 'discoveryIds'");
      }
    }
    if (model != null) {
      checkModel(model, columns);
    }
    Map<String, Where.Kind> kinds = kinds(columns, variations, model);
    for (int i = 0; i < cuts.size(); i++) {
      Cut c = cuts.get(i);
      if (c == null || !kinds.containsKey(c.column())) {
        throw new FieldException("/cuts/" + i + (c == null ? "" : "/column"), "cut on "
            + (c == null ? "nothing" : "'" + c.column() + "'") + ": not one of the region's columns "
            + kinds.keySet());
      }
      if (c.lo() != null && c.hi() != null && !(c.lo() <= c.hi())) {
        throw new FieldException("/cuts/" + i + "/lo", "cut on '" + c.column() + "' has lo " + c.lo()
            + " above hi " + c.hi());
      }
    }
    checkCuts(where, cuts, residual, kinds);
    if (scales != null) {
      for (int i = 0; i < scales.size(); i++) {
        ScaleShift shift = scales.get(i);
        if (shift == null) {
          throw new FieldException("/scales/" + i, "expected a scale shift {name, features, relative}");
        }
        for (String f : shift.features()) {
          if (!columns.features().contains(f)) {
            throw new FieldException("/scales/" + i, "scale shift '" + shift.name() + "' scales '" + f + "', which "
                + "is not among the region's features " + columns.features());
          }
        }
      }
    }
    checkDiscovery(discovery, discoveryIds, variations);
  }

  /** The columns a region's condition may name, with what they hold. */
  public static Map<String, Where.Kind> kinds(Columns columns, List<Variation> variations, Model model) {
    Map<String, Where.Kind> kinds = new LinkedHashMap<>();
    for (String f : columns.features()) {
      kinds.put(f, Where.Kind.NUMBER);
    }
    kinds.put(columns.id(), Where.Kind.NUMBER);
    if (columns.run() != null) {
      kinds.put(columns.run(), Where.Kind.NUMBER);
    }
    if (columns.block() != null) {
      kinds.put(columns.block(), Where.Kind.NUMBER);
    }
    if (columns.score() != null) {
      kinds.put(columns.score(), Where.Kind.NUMBER);
      // the external score column is also the model version 'external'
      kinds.put("score:external", Where.Kind.NUMBER);
    }
    for (String k : columns.categories()) {
      kinds.put(k, Where.Kind.CATEGORY);
    }
    if (variations != null) {
      for (Variation v : variations) {
        kinds.put(v.up(), Where.Kind.NUMBER);
        kinds.put(v.down(), Where.Kind.NUMBER);
      }
    }
    if (model != null) {
      kinds.put("score:" + model.version(), Where.Kind.NUMBER);
    }
    return kinds;
  }

  /**
   * The discovery reference's weight column as a region records it, or null: unweighted, or a file written before
   * the column was recorded.
   */
  public static String discoveryReferenceWeight(Region region) {
    if (region.provenance() == null || region.provenance().inputs() == null) {
      return null;
    }
    for (Input in : region.provenance().inputs()) {
      if (in != null && triage.core.sample.Role.REFERENCE.label().equals(in.role()) && in.weight() != null) {
        return in.weight();
      }
    }
    return null;
  }

  /**
   * Whether the discovery yields show a weighted reference: with events of weight one, b_d = Σw = N and its MC
   * error √Σw² = √N, so σ² = b_d up to rounding; any other weights make them differ (b_d = 0 tells nothing).
   */
  public static boolean weightedYields(Discovery d) {
    double s2 = d.expectedStatError() * d.expectedStatError();
    return Math.abs(s2 - d.expected()) > 1e-9 * Math.max(1, Math.abs(d.expected()));
  }

  /** The cuts that {@code triage region} writes for a condition: the box part of its plan (none when empty). */
  public static List<Cut> cutsOf(Plan plan) {
    List<Cut> cuts = new ArrayList<>();
    if (!plan.empty()) {
      for (Plan.Range r : plan.ranges()) {
        cuts.add(new Cut(r.column(), Double.isInfinite(r.lo()) ? null : r.lo(),
            Double.isInfinite(r.hi()) ? null : r.hi()));
      }
    }
    return cuts;
  }

  /** Whether a plan's box is not the whole condition, so that {@code residual} must be written. */
  public static boolean needsResidual(Plan plan) {
    return plan.empty() || plan.residual() != null || !plan.categories().isEmpty();
  }

  /**
   * The cuts must be what {@code where} compiles to, and {@code residual} must be there when they are not the whole
   * condition: other frameworks apply the cuts, the follow-up applies {@code where}, and the two must agree.
   */
  private static void checkCuts(String where, List<Cut> cuts, String residual, Map<String, Where.Kind> kinds) {
    Expr condition;
    try {
      condition = Where.parse(where, kinds);
    } catch (WhereException e) {
      throw new FieldException("/where", e.getMessage().replaceFirst("^selection: ", ""));
    }
    Plan plan = Where.plan(condition, kinds);
    List<Cut> expected = cutsOf(plan);
    for (int i = 0; i < Math.max(cuts.size(), expected.size()); i++) {
      Cut found = i < cuts.size() ? cuts.get(i) : null;
      Cut wanted = i < expected.size() ? expected.get(i) : null;
      if (found == null || !found.equals(wanted)) {
        throw new FieldException(i < cuts.size() ? "/cuts/" + i : "/cuts", "the cuts do not match 'where' ("
            + where + "), whose box is " + describe(expected) + " but the file has " + describe(cuts) + ": was the "
            + "file edited after it was frozen? Freeze the region again with triage region");
      }
    }
    if (residual == null && needsResidual(plan)) {
      throw new FieldException("/residual", "missing, but 'where' (" + where + ") has parts beyond the cuts: "
          + "without it the cuts alone would be taken for the region");
    }
  }

  private static String describe(List<Cut> cuts) {
    if (cuts.isEmpty()) {
      return "no cuts";
    }
    List<String> out = new ArrayList<>();
    for (Cut c : cuts) {
      out.add(c.lo() + " ≤ " + c.column() + " ≤ " + c.hi());
    }
    return String.join(", ", out).replace("null ≤ ", "").replace(" ≤ null", "");
  }

  /**
   * The discovery yields hold no fingerprint, but some of them follow from others: n_d is at most the number of
   * discovery ids (the whole observed sample), σ_syst follows from the variations and b_d, and the local Z_Bi from
   * n_d, b_d and σ_stat (relative tolerance 1e-6, room for a later, more accurate Z_Bi). An edit of one of them is
   * refused; a consistent edit of several cannot be noticed.
   */
  private static void checkDiscovery(Discovery d, IdSet ids, List<Variation> variations) {
    if (d.observed() < 0 || d.observed() > ids.count()) {
      throw new FieldException("/discovery/observed", "n_d = " + d.observed() + " cannot be: the discovery "
          + "observed sample has " + ids.count() + " events (discoveryIds)");
    }
    Set<String> names = new LinkedHashSet<>();
    for (Variation v : variations == null ? List.<Variation>of() : variations) {
      names.add(v.name());
    }
    Map<String, double[]> shifted = d.variations() == null ? Map.of() : d.variations();
    if (!shifted.keySet().equals(names)) {
      throw new FieldException("/discovery/variations", "has " + shifted.keySet() + " where the region's variations "
          + "are " + names);
    }
    for (var e : shifted.entrySet()) {
      double[] v = e.getValue();
      if (v == null || v.length != 2) {
        throw new FieldException("/discovery/variations/" + e.getKey(), "expected [up, down]");
      }
    }
    double syst2 = FollowUp.systSquared(d.expected(), shifted.values());
    if (!close(Math.sqrt(syst2), d.expectedSystError())) {
      throw new FieldException("/discovery/expectedSystError", d.expectedSystError() + " does not follow from the "
          + "variations and 'expected' (they give " + Math.sqrt(syst2) + "): was the file edited after it was "
          + "frozen?");
    }
    double z = CountingSignificance.zBiOrNaN(d.observed(), d.expected(), d.expectedStatError());
    if (!close(z, d.localZBi())) {
      throw new FieldException("/discovery/localZBi", d.localZBi() + " does not follow from 'observed', "
          + "'expected' and 'expectedStatError' (they give " + z + "): was the file edited after it was frozen?");
    }
  }

  private static boolean close(double a, double b) {
    return Double.compare(a, b) == 0 || Math.abs(a - b) <= 1e-6 * Math.max(1, Math.abs(b));
  }

  /** "/cuts/0/lo" as "cuts[0].lo". */
  static String display(String pointer) {
    StringBuilder out = new StringBuilder();
    for (String part : pointer.split("/")) {
      if (part.isEmpty()) {
        continue;
      }
      if (part.chars().allMatch(Character::isDigit)) {
        out.append('[').append(part).append(']');
      } else {
        out.append(out.isEmpty() ? "" : ".").append(part.replace("~1", "/").replace("~0", "~"));
      }
    }
    return out.isEmpty() ? "(the whole file)" : out.toString();
  }

  /**
   * The frozen model must be the one that was frozen (its SHA-256) and must read the region's feature columns: a
   * region file edited after freezing must not silently score events another way.
   */
  private static void checkModel(Model model, Columns columns) {
    if (model.json() == null || model.sha256() == null || model.version() == null) {
      throw new FieldException("/model", "the frozen model needs 'version', 'sha256' and 'json'");
    }
    String sha = triage.core.provenance.Fingerprints.sha256(model.json().getBytes(
        java.nio.charset.StandardCharsets.UTF_8));
    if (!sha.equals(model.sha256())) {
      throw new FieldException("/model/sha256", "the frozen model's SHA-256 does not match its text (was the region "
          + "file edited after it was frozen?)");
    }
    triage.core.ratio.RatioModel m;
    try {
      m = triage.core.ratio.RatioModel.fromJson(model.json());
    } catch (RuntimeException e) {
      throw new FieldException("/model/json", "the frozen model cannot be read: " + e.getMessage());
    }
    for (String f : m.featureNames()) {
      if (!columns.features().contains(f)) {
        throw new FieldException("/model/json", "the frozen model reads feature '" + f + "', which is not among the "
            + "region's feature columns " + columns.features());
      }
    }
  }

  /** Writes the region as JSON. */
  public void write(Path file) throws IOException {
    Files.writeString(file, MAPPER.writeValueAsString(this) + "\n");
  }

  /**
   * Reads a region file. Every problem is an {@link InputException} naming the file, the field, and the line and
   * column where the field (or the syntax error) is; a missing field has no place.
   */
  public static Region read(Path file) {
    String text;
    try {
      text = Files.readString(file);
    } catch (NoSuchFileException e) {
      throw new InputException(file, "region file not found");
    } catch (IOException e) {
      throw new InputException(file, 0, 0, "cannot read the region file: " + e.getMessage(), e);
    }
    try {
      return MAPPER.readValue(text, Region.class);
    } catch (JsonProcessingException e) {
      FieldException field = cause(e, FieldException.class);
      IllegalArgumentException invalid = cause(e, IllegalArgumentException.class);
      JsonParseException syntax = cause(e, JsonParseException.class);
      String pointer = field != null ? field.pointer() : syntax == null && e instanceof JsonMappingException m
          ? pointer(m) : null;
      String message;
      if (field != null) {
        message = field.getMessage();
      } else if (invalid != null) {
        message = "field '" + display(pointer) + "': " + invalid.getMessage();
      } else if (e instanceof MismatchedInputException m && m.getTargetType() != null) {
        message = "field '" + display(pointer) + "': expected " + expected(m.getTargetType());
      } else {
        message = plain((syntax != null ? syntax : e).getOriginalMessage());
      }
      JsonLocation at = pointer == null ? (syntax != null ? syntax : e).getLocation() : locate(text, pointer);
      throw new InputException(file, at == null ? 0 : at.getLineNr(), at == null ? 0 : at.getColumnNr(),
          "not a valid region file: " + message, null);
    }
  }

  /** The first cause of a type, or null. */
  private static <T extends Throwable> T cause(Throwable e, Class<T> type) {
    for (Throwable t = e; t != null; t = t.getCause()) {
      if (type.isInstance(t)) {
        return type.cast(t);
      }
    }
    return null;
  }

  /** The JSON pointer of the field a mapping error is about. */
  private static String pointer(JsonMappingException e) {
    StringBuilder out = new StringBuilder();
    for (JsonMappingException.Reference r : e.getPath()) {
      out.append('/').append(r.getFieldName() != null ? r.getFieldName().replace("~", "~0").replace("/", "~1")
          : String.valueOf(r.getIndex()));
    }
    return out.toString();
  }

  /**
   * Where a field starts in the text (its name, or for an array element its first token); null when the field is
   * not in the text (a missing field) or the pointer is the whole file.
   */
  static JsonLocation locate(String text, String pointer) {
    if (pointer.isEmpty()) {
      return null;
    }
    JsonPointer target = JsonPointer.compile(pointer);
    try (JsonParser p = MAPPER.createParser(text)) {
      while (p.nextToken() != null) {
        if (p.getParsingContext().pathAsPointer().equals(target)) {
          return p.currentTokenLocation();
        }
      }
    } catch (IOException e) {
      // a syntax error after the field was not found: no place to give
    }
    return null;
  }

  /** Jackson's message without its source description ("[Source: …; line: 3, column: 11]" becomes the place). */
  static String plain(String message) {
    return message.replaceAll("\\[Source: [^\\]]*?line: (\\d+), column: (\\d+)\\]", "line $1, column $2")
        .replaceAll("\\[Source: [^\\]]*\\]", "").replace("`", "'");
  }

  /** What a field of this type holds, for people. */
  private static String expected(Class<?> type) {
    if (type == long.class || type == int.class || type == Long.class || type == Integer.class) {
      return "a whole number";
    }
    if (type == double.class || type == Double.class) {
      return "a number";
    }
    if (type == boolean.class || type == Boolean.class) {
      return "true or false";
    }
    if (type == String.class) {
      return "a string";
    }
    if (type.isArray() || java.util.Collection.class.isAssignableFrom(type)) {
      return "an array";
    }
    return "an object";
  }
}
