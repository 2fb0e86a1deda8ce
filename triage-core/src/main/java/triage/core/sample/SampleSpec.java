package triage.core.sample;

import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonProperty;
import com.fasterxml.jackson.core.JsonLocation;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.List;
import java.util.Set;

/**
 * An analysis' inputs: the columns all samples share, the systematic variations, and one entry per file.
 * Written as JSON ({@code "format": "triage-samples/1"}); see {@code docs/sample-spec.md}.
 *
 * @param format the spec format, {@value #FORMAT}
 * @param columns the columns every sample has
 * @param variations systematic-variation weight pairs, carried by reference samples
 * @param scales systematics declared as relative scale shifts of features (evaluated by re-scoring)
 * @param samples the input files
 */
@JsonInclude(JsonInclude.Include.NON_EMPTY)
public record SampleSpec(String format, Columns columns, List<Variation> variations, List<ScaleShift> scales,
    List<SampleSource> samples) {

  /** A spec without scale shifts. */
  public SampleSpec(String format, Columns columns, List<Variation> variations, List<SampleSource> samples) {
    this(format, columns, variations, List.of(), samples);
  }

  /** The only spec format this version reads. */
  public static final String FORMAT = "triage-samples/1";

  /** The mapper used to read and write specs; strict about unknown fields. */
  private static final ObjectMapper MAPPER = new ObjectMapper()
      .enable(com.fasterxml.jackson.core.JsonParser.Feature.STRICT_DUPLICATE_DETECTION)
      .enable(DeserializationFeature.FAIL_ON_TRAILING_TOKENS)
      .addHandler(new UnknownFieldHandler())
      .enable(DeserializationFeature.FAIL_ON_NULL_FOR_PRIMITIVES)
      .enable(SerializationFeature.INDENT_OUTPUT);

  /** Checks the format, that sample names are unique and that variation columns clash with no other column. */
  public SampleSpec {
    if (format == null) {
      format = FORMAT;
    }
    if (!FORMAT.equals(format)) {
      throw new IllegalArgumentException("spec format '" + format + "' is not known to this version (expected '"
          + FORMAT + "')");
    }
    if (columns == null) {
      throw new IllegalArgumentException("spec has no 'columns'");
    }
    variations = variations == null ? List.of() : List.copyOf(variations);
    scales = scales == null ? List.of() : List.copyOf(scales);
    if (samples == null || samples.isEmpty()) {
      throw new IllegalArgumentException("spec has no 'samples'");
    }
    samples = List.copyOf(samples);
    Set<String> names = new HashSet<>();
    for (SampleSource s : samples) {
      if (!names.add(s.name())) {
        throw new IllegalArgumentException("sample name '" + s.name() + "' is used twice");
      }
    }
    Set<String> used = new HashSet<>(columns.all());
    Set<String> variationNames = new HashSet<>();
    for (Variation v : variations) {
      if (!variationNames.add(v.name())) {
        throw new IllegalArgumentException("variation '" + v.name() + "' is named twice");
      }
      for (String c : List.of(v.up(), v.down())) {
        if (!used.add(c)) {
          throw new IllegalArgumentException("variation '" + v.name() + "' column '" + c
              + "' is already used by another column");
        }
      }
    }
    for (ScaleShift shift : scales) {
      if (!variationNames.add(shift.name())) {
        throw new IllegalArgumentException("systematic '" + shift.name() + "' is named twice");
      }
      for (String f : shift.features()) {
        if (!columns.features().contains(f)) {
          throw new IllegalArgumentException("scale shift '" + shift.name() + "' scales '" + f + "', which is not "
              + "a feature (features: " + String.join(", ", columns.features()) + ")");
        }
      }
    }
    for (SampleSource s : samples) {
      if (s.weight() != null && used.contains(s.weight())) {
        throw new IllegalArgumentException("sample '" + s.name() + "' weight column '" + s.weight()
            + "' is already used by another column");
      }
    }
  }

  /** The sample with this name, or null. */
  public SampleSource sample(String name) {
    for (SampleSource s : samples) {
      if (s.name().equals(name)) {
        return s;
      }
    }
    return null;
  }

  /** The samples of a role, in spec order. */
  public List<SampleSource> samples(Role role) {
    List<SampleSource> out = new ArrayList<>();
    for (SampleSource s : samples) {
      if (s.role() == role) {
        out.add(s);
      }
    }
    return out;
  }

  /** The same spec with every relative file resolved against a folder. */
  public SampleSpec resolvedAgainst(Path folder) {
    List<SampleSource> resolved = new ArrayList<>();
    for (SampleSource s : samples) {
      resolved.add(s.resolvedAgainst(folder));
    }
    return new SampleSpec(format, columns, variations, scales, resolved);
  }

  /** The spec as indented JSON. */
  public String toJson() {
    try {
      return MAPPER.writeValueAsString(this);
    } catch (JsonProcessingException e) {
      throw new IllegalStateException(e);
    }
  }

  /** The field name Jackson uses for {@link #format()}. */
  @Override
  @JsonProperty("format")
  public String format() {
    return format;
  }

  /** An unknown field, with the place of its value (Jackson's own exception points past the enclosing object). */
  private static final class UnknownField extends RuntimeException {
    private static final long serialVersionUID = 1L;

    /** Line of the field's value. */
    final int line;

    /** Column of the field's value. */
    final int column;

    /** The unknown field's name. */
    final String field;

    UnknownField(String field, String message, int line, int column) {
      super(message);
      this.field = field;
      this.line = line;
      this.column = column;
    }
  }

  /**
   * The 1-based line and column of the first {@code "key":} in JSON text, or {0, 0}. Used where Jackson has
   * buffered the input (record creators) and lost the place.
   */
  static long[] locateKey(String text, String key) {
    java.util.regex.Matcher m = java.util.regex.Pattern.compile("\"" + java.util.regex.Pattern.quote(key)
        + "\"\\s*:").matcher(text);
    if (!m.find()) {
      return new long[] {0, 0};
    }
    long line = 1;
    int lineStart = 0;
    for (int i = 0; i < m.start(); i++) {
      if (text.charAt(i) == '\n') {
        line++;
        lineStart = i + 1;
      }
    }
    return new long[] {line, m.start() - lineStart + 1};
  }

  /** Turns an unknown field into {@link UnknownField} while the parser still stands on it. */
  private static final class UnknownFieldHandler extends com.fasterxml.jackson.databind.deser.DeserializationProblemHandler {
    @Override
    public boolean handleUnknownProperty(com.fasterxml.jackson.databind.DeserializationContext ctxt,
        com.fasterxml.jackson.core.JsonParser p, com.fasterxml.jackson.databind.JsonDeserializer<?> deserializer,
        Object beanOrClass, String propertyName) {
      JsonLocation at = p.currentTokenLocation();
      List<String> known = new ArrayList<>();
      java.util.Collection<Object> names = deserializer.getKnownPropertyNames();
      if (names != null) {
        for (Object n : names) {
          known.add(String.valueOf(n));
        }
      }
      throw new UnknownField(propertyName, "unknown field '" + propertyName + "'" + (known.isEmpty() ? ""
          : ", expected one of " + String.join(", ", known)), at.getLineNr(), at.getColumnNr());
    }
  }

  /**
   * Reads and checks a spec file; relative sample files are resolved against the spec's folder.
   *
   * @throws InputException naming the file, line and column of the first problem
   */
  public static SampleSpec read(Path file) {
    String text;
    try {
      text = Files.readString(file);
    } catch (NoSuchFileException e) {
      throw new InputException(file, "sample spec not found");
    } catch (IOException e) {
      throw new InputException(file, 0, 0, "cannot read the sample spec: " + e.getMessage(), e);
    }
    Path folder = file.toAbsolutePath().getParent();
    return parse(text, file).resolvedAgainst(folder);
  }

  /**
   * Parses a spec from JSON text without resolving files.
   *
   * @param text the JSON
   * @param origin the file named in error messages, or null
   * @throws InputException naming the line and column of the first problem
   */
  public static SampleSpec parse(String text, Path origin) {
    try {
      SampleSpec spec = MAPPER.readValue(text, SampleSpec.class);
      if (spec == null) {
        throw new InputException(origin, 1, 1, "empty sample spec: expected a JSON object", null);
      }
      return spec;
    } catch (UnknownField u) {
      // an unknown field of the top-level object comes through unwrapped
      long[] place = u.line > 0 ? new long[] {u.line, u.column} : locateKey(text, u.field);
      throw new InputException(origin, place[0], place[1], u.getMessage(), null);
    } catch (JsonProcessingException e) {
      Throwable cause = e;
      while (cause != null && !(cause instanceof UnknownField)) {
        cause = cause.getCause();
      }
      if (cause == null) {
        // A record's constructor checks its fields before Jackson reports the unknown ones it buffered, so a
        // misspelt required key ("featurs") surfaced as the check's complaint ("no feature columns"): look for an
        // unknown field first, since it is the likelier cause and the spec promises to name it.
        cause = firstUnknownField(text);
      }
      if (cause instanceof UnknownField u) {
        long[] place = u.line > 0 ? new long[] {u.line, u.column} : locateKey(text, u.field);
        throw new InputException(origin, place[0], place[1], u.getMessage(), null);
      }
      JsonLocation at = e.getLocation();
      throw new InputException(origin, at == null ? 0 : at.getLineNr(), at == null ? 0 : at.getColumnNr(),
          "bad sample spec: " + plainWords(e), null);
    }
  }

  /**
   * The first field, in text order, that no record of the spec knows (the spec, {@code columns}, and the entries of
   * {@code variations}, {@code scales} and {@code samples}), with the place of its value; null when there is none
   * or the text does not parse as far.
   */
  static UnknownField firstUnknownField(String text) {
    try (com.fasterxml.jackson.core.JsonParser p = MAPPER.getFactory().createParser(text)) {
      return p.nextToken() == com.fasterxml.jackson.core.JsonToken.START_OBJECT ? unknownIn(p, SampleSpec.class)
          : null;
    } catch (IOException | RuntimeException e) {
      return null;
    }
  }

  /** Scans one object (the parser on its start) against a record's components; see {@link #firstUnknownField}. */
  private static UnknownField unknownIn(com.fasterxml.jackson.core.JsonParser p, Class<?> type) throws IOException {
    java.util.Map<String, java.lang.reflect.RecordComponent> known = new java.util.LinkedHashMap<>();
    for (java.lang.reflect.RecordComponent c : type.getRecordComponents()) {
      known.put(c.getName(), c);
    }
    while (p.nextToken() == com.fasterxml.jackson.core.JsonToken.FIELD_NAME) {
      String name = p.currentName();
      com.fasterxml.jackson.core.JsonToken value = p.nextToken();
      java.lang.reflect.RecordComponent c = known.get(name);
      if (c == null) {
        JsonLocation at = p.currentTokenLocation();
        return new UnknownField(name, "unknown field '" + name + "', expected one of "
            + String.join(", ", known.keySet()), at.getLineNr(), at.getColumnNr());
      }
      Class<?> inner = c.getType().isRecord() ? c.getType() : null;
      if (inner == null && c.getGenericType() instanceof java.lang.reflect.ParameterizedType t
          && t.getActualTypeArguments()[0] instanceof Class<?> e && e.isRecord()) {
        inner = e;
      }
      if (inner != null && value == com.fasterxml.jackson.core.JsonToken.START_OBJECT) {
        UnknownField u = unknownIn(p, inner);
        if (u != null) {
          return u;
        }
      } else if (inner != null && value == com.fasterxml.jackson.core.JsonToken.START_ARRAY) {
        com.fasterxml.jackson.core.JsonToken item;
        while ((item = p.nextToken()) != com.fasterxml.jackson.core.JsonToken.END_ARRAY && item != null) {
          if (item == com.fasterxml.jackson.core.JsonToken.START_OBJECT) {
            UnknownField u = unknownIn(p, inner);
            if (u != null) {
              return u;
            }
          } else {
            p.skipChildren();
          }
        }
      } else {
        p.skipChildren();
      }
    }
    return null;
  }

  /** What went wrong while reading a spec, in the spec's terms rather than the JSON library's. */
  static String plainWords(JsonProcessingException e) {
    Throwable root = e;
    while (root.getCause() != null) {
      root = root.getCause();
    }
    if (root instanceof IllegalArgumentException) {
      return root.getMessage();
    }
    String where = "";
    if (e instanceof com.fasterxml.jackson.databind.JsonMappingException m && !m.getPath().isEmpty()) {
      StringBuilder b = new StringBuilder();
      for (var ref : m.getPath()) {
        if (ref.getFieldName() != null) {
          b.append(b.isEmpty() ? "" : ".").append(ref.getFieldName());
        } else if (ref.getIndex() >= 0) {
          b.append('[').append(ref.getIndex()).append(']');
        }
      }
      where = b.isEmpty() ? "" : "'" + b + "': ";
    }
    if (e instanceof com.fasterxml.jackson.databind.exc.MismatchedInputException mi && mi.getTargetType() != null) {
      Class<?> t = mi.getTargetType();
      String wanted = java.util.Collection.class.isAssignableFrom(t) ? "a list [ ... ]"
          : t == String.class ? "text in quotes"
          : t == double.class || t == Double.class || t == int.class || t == Integer.class ? "a number"
          : t == boolean.class || t == Boolean.class ? "true or false"
          : "an object { ... }";
      return where + "expected " + wanted;
    }
    if (root instanceof NullPointerException) {
      return where + "a value is missing (null)";
    }
    String original = e.getOriginalMessage();
    if (original != null && original.contains("Non-standard token")) {
      return where + "NaN and Infinity are not numbers in JSON; give a finite number";
    }
    if (original != null && original.contains("Unexpected end-of-input")) {
      return where + "the text ends before the spec is complete (a missing '}' or ']'?)";
    }
    // the library's own wording, first line only
    return where + (original == null ? e.getClass().getSimpleName() : original.lines().findFirst().orElse(""));
  }
}
