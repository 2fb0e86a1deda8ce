package triage.shell;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.PrintWriter;
import java.util.Locale;
import picocli.CommandLine;

/**
 * Where a command's results go. With {@code --json}, stdout carries exactly one JSON object and human text goes
 * to stderr; without it, human text goes to stdout.
 */
public final class Output {
  /** Serialises results; doubles keep full precision. */
  static final ObjectMapper JSON = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT)
      .disable(SerializationFeature.FAIL_ON_EMPTY_BEANS);

  /** Whether JSON was asked for. */
  private final boolean json;

  /** The command's stdout. */
  private final PrintWriter out;

  /** The command's stderr. */
  private final PrintWriter err;

  /** Output for a command, given whether {@code --json} was set. */
  public Output(CommandLine.Model.CommandSpec spec, boolean json) {
    this.json = json;
    this.out = spec.commandLine().getOut();
    this.err = spec.commandLine().getErr();
  }

  /** Whether JSON was asked for. */
  public boolean json() {
    return json;
  }

  /** Prints a line of human text (stdout, or stderr with {@code --json}). */
  public void say(String format, Object... args) {
    PrintWriter w = json ? err : out;
    w.println(args.length == 0 ? format : String.format(Locale.ROOT, format, args));
    w.flush();
  }

  /** Prints a progress or warning line on stderr. */
  public void note(String format, Object... args) {
    err.println(args.length == 0 ? format : String.format(Locale.ROOT, format, args));
    err.flush();
  }

  /** Prints the one JSON object of a {@code --json} run (does nothing otherwise). */
  public void result(Object value) {
    if (!json) {
      return;
    }
    try {
      out.println(JSON.writeValueAsString(value));
    } catch (JsonProcessingException e) {
      throw new IllegalStateException("cannot write JSON result", e);
    }
    out.flush();
  }
}
