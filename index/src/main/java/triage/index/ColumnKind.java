package triage.index;

import com.fasterxml.jackson.annotation.JsonValue;

/** What a column of the index holds; decides how it can be selected and summed. */
public enum ColumnKind {
  /** A numeric input variable of the ratio model. */
  FEATURE("feature"),
  /** The event id (whole number, unique within a sample). */
  ID("id"),
  /** The run number (whole number). */
  RUN("run"),
  /** The luminosity block (whole number). */
  BLOCK("block"),
  /** Categorical bookkeeping, as text. */
  CATEGORY("category"),
  /** An external per-event score read at ingest. */
  SCORE("score");

  /** The name used in JSON. */
  private final String label;

  ColumnKind(String label) {
    this.label = label;
  }

  /** The name used in JSON. */
  @JsonValue
  public String label() {
    return label;
  }

  /** Whether values are numbers that ranges select on (all but categories). */
  public boolean numeric() {
    return this != CATEGORY;
  }

  /** Whether values are whole numbers. */
  public boolean integral() {
    return this == ID || this == RUN || this == BLOCK;
  }
}
