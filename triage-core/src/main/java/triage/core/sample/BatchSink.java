package triage.core.sample;

import java.io.IOException;

/** Receives filled batches of events; must copy what it keeps, since the batch is reused. */
@FunctionalInterface
public interface BatchSink {
  /** Takes a batch. */
  void accept(EventBatch batch) throws IOException;
}
