package triage.core.sample;

import java.io.IOException;
import java.util.List;

/** Receives every rejected row with its reason (used with {@link BadRowPolicy#SKIP}). */
@FunctionalInterface
public interface RejectSink {
  /**
   * Takes a rejected row.
   *
   * @param problem why the row was rejected
   * @param fields the row's fields as read
   */
  void reject(RowProblem problem, List<String> fields) throws IOException;
}
