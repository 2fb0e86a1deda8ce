package triage.core.select;

/** A compiled condition, tested on one event at a time. */
@FunctionalInterface
public interface RowTest {
  /** Whether the event passes. */
  boolean test(ValueSource event);
}
