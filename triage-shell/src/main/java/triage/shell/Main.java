package triage.shell;

import java.io.PrintWriter;
import picocli.CommandLine;
import triage.core.sample.InputException;

/** Entry point of the command line. Maps errors to exit codes here, and only here calls {@code System.exit}. */
public final class Main {
  private Main() {
    // no instance
  }

  /** Keeps a reference so the logging level set in {@link #main} is not lost to garbage collection. */
  private static final java.util.logging.Logger LUCENE_VECTOR_LOG =
      java.util.logging.Logger.getLogger("org.apache.lucene.internal.vectorization");

  /** Runs triage. */
  public static void main(String[] args) {
    // Lucene logs a hint about the incubating vector module at start; it is not the user's concern.
    LUCENE_VECTOR_LOG.setLevel(java.util.logging.Level.SEVERE);
    System.exit(run(args, new PrintWriter(System.out, true), new PrintWriter(System.err, true)));
  }

  /** Runs triage with given output streams and returns the exit code (used by tests and the console). */
  public static int run(String[] args, PrintWriter out, PrintWriter err) {
    CommandLine cli = commandLine();
    cli.setOut(out);
    cli.setErr(err);
    return cli.execute(args);
  }

  /** The command tree with the project's error handling. */
  public static CommandLine commandLine() {
    CommandLine cli = new CommandLine(new TriageCommand());
    cli.setCaseInsensitiveEnumValuesAllowed(true);
    cli.setUsageHelpAutoWidth(true);
    cli.setExecutionExceptionHandler((e, commandLine, parseResult) -> {
      PrintWriter err = commandLine.getErr();
      Throwable t = e;
      if (t instanceof java.io.UncheckedIOException u && u.getCause() != null) {
        t = u.getCause();
      }
      if (t instanceof triage.core.Cancellation.CancelledException) {
        err.println("triage: cancelled");
        err.flush();
        return ExitCodes.CANCELLED;
      }
      if (t instanceof InputException input) {
        err.println("triage: " + input.getMessage());
        err.flush();
        return ExitCodes.INPUT;
      }
      if (t instanceof CommandLine.ParameterException p) {
        err.println("triage: " + p.getMessage());
        p.getCommandLine().usage(err);
        err.flush();
        return ExitCodes.USAGE;
      }
      if (t instanceof java.nio.file.NoSuchFileException nf) {
        err.println("triage: " + nf.getFile() + ": not found");
        err.flush();
        return ExitCodes.INPUT;
      }
      if (t instanceof java.nio.file.AccessDeniedException ad) {
        err.println("triage: " + ad.getFile() + ": permission denied");
        err.flush();
        return ExitCodes.INPUT;
      }
      err.println("triage: internal error: " + t + " (this is a bug; please report it with the trace below)");
      t.printStackTrace(err);
      err.flush();
      return ExitCodes.INTERNAL;
    });
    return cli;
  }
}
