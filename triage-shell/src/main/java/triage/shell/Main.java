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
    // Always UTF-8, whatever the locale: JSON must be (RFC 8259), and without a UTF-8 locale (cron jobs, bare
    // containers) the JVM would write every Σ, √, ± and non-ASCII category value as '?'.
    System.setOut(new java.io.PrintStream(new java.io.BufferedOutputStream(new java.io.FileOutputStream(
        java.io.FileDescriptor.out), 1 << 16), true,
        java.nio.charset.StandardCharsets.UTF_8));
    System.setErr(new java.io.PrintStream(new java.io.BufferedOutputStream(new java.io.FileOutputStream(
        java.io.FileDescriptor.err), 1 << 16), true,
        java.nio.charset.StandardCharsets.UTF_8));
    PrintWriter out = new PrintWriter(System.out, true);
    PrintWriter err = new PrintWriter(System.err, true);
    int code = run(args, out, err);
    out.flush();
    err.flush();
    System.exit(code);
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
