package triage.core.sample;

import com.fasterxml.jackson.annotation.JsonCreator;
import com.fasterxml.jackson.annotation.JsonValue;
import java.util.Arrays;
import java.util.Locale;
import java.util.stream.Collectors;

/** What a sample is for in an analysis. */
public enum Role {
  /** The simulated reference (background-only) sample used in the discovery: weighted events. */
  REFERENCE("reference", true, false),
  /** The observed (discovery) sample: every event weighs one. */
  OBSERVED("observed", false, false),
  /** An independent reference sample for the follow-up of a frozen region. */
  FOLLOWUP_REFERENCE("followup-reference", true, true),
  /** An independent observed sample for the follow-up of a frozen region. */
  FOLLOWUP_OBSERVED("followup-observed", false, true);

  /** The name used in specs, on the command line and in JSON. */
  private final String label;

  /** Whether events of this role carry weights (reference samples). */
  private final boolean weighted;

  /** Whether the role belongs to the follow-up rather than the discovery. */
  private final boolean followUp;

  Role(String label, boolean weighted, boolean followUp) {
    this.label = label;
    this.weighted = weighted;
    this.followUp = followUp;
  }

  /** The name used in specs, on the command line and in JSON. */
  @JsonValue
  public String label() {
    return label;
  }

  /** Whether events of this role carry weights (reference samples do; observed events weigh one). */
  public boolean weighted() {
    return weighted;
  }

  /** Whether the role belongs to the follow-up on independent data. */
  public boolean followUp() {
    return followUp;
  }

  /**
   * The role with the given label.
   *
   * @throws IllegalArgumentException naming the allowed labels when none matches
   */
  @JsonCreator
  public static Role fromLabel(String label) {
    for (Role r : values()) {
      if (r.label.equals(label)) {
        return r;
      }
    }
    throw new IllegalArgumentException(String.format(Locale.ROOT, "unknown role '%s', expected one of %s", label,
        Arrays.stream(values()).map(Role::label).collect(Collectors.joining(", "))));
  }

  @Override
  public String toString() {
    return label;
  }
}
