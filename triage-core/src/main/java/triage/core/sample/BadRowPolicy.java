package triage.core.sample;

/** What to do with a row that fails validation. */
public enum BadRowPolicy {
  /** Stop at the first bad row and report it; nothing is written. */
  FAIL,
  /** Set the row aside, record it and its reason in the rejects file, and go on. */
  SKIP
}
