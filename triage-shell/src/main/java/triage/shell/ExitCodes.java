package triage.shell;

/** The documented exit codes of every command. */
public final class ExitCodes {
  /** Success. */
  public static final int OK = 0;

  /** An internal error (a bug): the message asks for a report. */
  public static final int INTERNAL = 1;

  /**
   * A usage error, judged from the command line alone: unknown command or option, a missing option, a value of the
   * wrong form or out of its range. (A name the index lacks, or a WHERE condition that does not parse, is
   * {@link #INPUT}.)
   */
  public static final int USAGE = 2;

  /** Invalid input: a file, spec or index that is missing, malformed or inconsistent. */
  public static final int INPUT = 3;

  /** The command was cancelled (Ctrl-C in the console); what it had finished is kept. */
  public static final int CANCELLED = 130;

  /** The footer listing the codes, shown in every command's help. */
  public static final String FOOTER = "%nExit codes: 0 success, 1 internal error, 2 usage error, 3 invalid input, 130 cancelled.";

  private ExitCodes() {
    // no instance
  }
}
