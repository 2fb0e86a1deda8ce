package triage.core;

/**
 * A request, from the console's Ctrl-C, to stop the running command. Long loops (optimiser iterations, toys,
 * permutations, index scans) call {@link #check()} between steps, so a command stops within one step and leaves
 * nothing half-written: stored results (toys, models) are written whole or not at all.
 *
 * <p>One flag for the process: a console runs one command at a time, and clears the flag before each.
 */
public final class Cancellation {
  /** Set by {@link #request()}. */
  private static volatile boolean requested;

  private Cancellation() {
    // no instance
  }

  /** Thrown by {@link #check()} once a stop was requested. */
  public static final class CancelledException extends RuntimeException {
    private static final long serialVersionUID = 1L;

    /** The exception. */
    public CancelledException() {
      super("cancelled", null, false, false);
    }
  }

  /** Asks the running command to stop (safe from any thread, e.g. a signal handler). */
  public static void request() {
    requested = true;
  }

  /** Forgets a request (before a new command starts). */
  public static void clear() {
    requested = false;
  }

  /** Whether a stop was requested. */
  public static boolean requested() {
    return requested;
  }

  /** Throws {@link CancelledException} if a stop was requested. */
  public static void check() {
    if (requested) {
      throw new CancelledException();
    }
  }
}
