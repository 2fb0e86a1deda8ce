package triage.core.sample;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.nio.file.Path;

/**
 * One input file of an analysis.
 *
 * @param name the sample's name in the index (defaults to the role's label)
 * @param role what the sample is for
 * @param file the CSV or TSV file, plain or gzip-compressed; relative paths are resolved against the spec's folder
 * @param weight the weight column (reference roles only; without one every event weighs one)
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record SampleSource(String name, Role role, String file, String weight) {
  /** Checks that the role is given, a weight column only appears on weighted roles, and fills in the name. */
  public SampleSource {
    if (role == null) {
      throw new IllegalArgumentException("sample has no 'role' (expected one of reference, observed, "
          + "followup-reference, followup-observed)");
    }
    if (file == null || file.isEmpty()) {
      throw new IllegalArgumentException("sample '" + (name == null ? role.label() : name) + "' has no 'file'");
    }
    if (name == null) {
      name = role.label();
    }
    Columns.checkName("sample name", name);
    if (weight != null) {
      Columns.checkName("weight column", weight);
      if (!role.weighted()) {
        throw new IllegalArgumentException("sample '" + name + "' has role " + role
            + ", whose events weigh one: remove its 'weight' column");
      }
    }
  }

  /** The file as a path. */
  public Path path() {
    return Path.of(file);
  }

  /** The same sample with its file resolved against a folder. */
  public SampleSource resolvedAgainst(Path folder) {
    return path().isAbsolute() || folder == null ? this
        : new SampleSource(name, role, folder.resolve(file).normalize().toString(), weight);
  }
}
