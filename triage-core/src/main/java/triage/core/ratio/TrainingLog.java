package triage.core.ratio;

import java.util.ArrayList;
import java.util.List;

/**
 * Bounded training log. Iterations are recorded at a stride that starts at 1 and doubles (every
 * second entry dropped) whenever the log would exceed its capacity, so a run of any length keeps
 * at most {@code capacity} evenly spread entries; the final iteration is always recorded.
 *
 * @param entries entries in iteration order
 * @param stride  final recording stride (1 = every iteration)
 */
public record TrainingLog(List<LogEntry> entries, int stride) {

  /** Validates and copies. */
  public TrainingLog {
    entries = List.copyOf(entries);
    if (stride < 1) {
      throw new IllegalArgumentException("stride must be >= 1");
    }
  }

  /** Empty log. */
  public static TrainingLog empty() {
    return new TrainingLog(List.of(), 1);
  }

  /** Mutable recorder used during a fit. */
  static final class Recorder {
    /** Maximum entries kept. */
    private final int capacity;
    /** Entries so far. */
    private final ArrayList<LogEntry> entries = new ArrayList<>();
    /** Current stride. */
    private int stride = 1;
    /** Start time in nanoseconds. */
    private final long startNanos = System.nanoTime();
    /** Last entry offered, recorded at the end if it was skipped. */
    private LogEntry lastOffered;

    Recorder(int capacity) {
      if (capacity < 2) {
        throw new IllegalArgumentException("capacity must be >= 2");
      }
      this.capacity = capacity;
    }

    /** Offers an iteration; recorded if it falls on the stride. */
    void offer(int iteration, double loss, double pgNorm) {
      LogEntry entry = new LogEntry(iteration, loss, pgNorm,
          (System.nanoTime() - startNanos) * 1e-9);
      lastOffered = entry;
      if (iteration % stride != 0) {
        return;
      }
      if (entries.size() >= capacity - 1) {
        ArrayList<LogEntry> kept = new ArrayList<>();
        for (LogEntry e : entries) {
          if (e.iteration() % (2 * stride) == 0) {
            kept.add(e);
          }
        }
        entries.clear();
        entries.addAll(kept);
        stride *= 2;
        if (iteration % stride != 0) {
          return;
        }
      }
      entries.add(entry);
    }

    /** Seconds since construction. */
    double elapsedSeconds() {
      return (System.nanoTime() - startNanos) * 1e-9;
    }

    /** The log, with the last offered iteration appended if it was skipped. */
    TrainingLog finish() {
      ArrayList<LogEntry> out = new ArrayList<>(entries);
      if (lastOffered != null && (out.isEmpty()
          || out.get(out.size() - 1).iteration() != lastOffered.iteration())) {
        out.add(lastOffered);
      }
      return new TrainingLog(out, stride);
    }
  }
}
