package triage.shell;

import java.time.Duration;
import java.time.temporal.ChronoUnit;
import java.util.Locale;
import me.tongfei.progressbar.ConsoleProgressBarConsumer;
import me.tongfei.progressbar.ProgressBar;
import me.tongfei.progressbar.ProgressBarBuilder;
import me.tongfei.progressbar.ProgressBarStyle;

/**
 * Progress of a run of toys: a bar with count, rate and ETA on an interactive terminal, redrawn in place on stderr;
 * otherwise (output redirected, tests, CI, {@code --json}) one line per toy, so logs stay readable and plain.
 */
final class ToyProgress implements AutoCloseable {
  /** The bar, or null when printing lines. */
  private final ProgressBar bar;

  /** Where lines go. */
  private final Output out;

  /** Toys to do in this run. */
  private final int total;

  /** Toys done in this run. */
  private int done;

  /** When the run started. */
  private final long start = System.nanoTime();

  private ToyProgress(ProgressBar bar, Output out, int total) {
    this.bar = bar;
    this.out = out;
    this.total = total;
  }

  /**
   * Starts progress reporting.
   *
   * @param out the command's output
   * @param task the bar's label
   * @param total toys to do in this run
   */
  static ToyProgress start(Output out, String task, int total) {
    ProgressBar bar = null;
    if (interactive(out) && total > 0) {
      bar = new ProgressBarBuilder().setTaskName(task).setInitialMax(total).setStyle(ProgressBarStyle.ASCII)
          .setConsumer(new ConsoleProgressBarConsumer(System.err)).setUnit(" toys", 1)
          .showSpeed(new java.text.DecimalFormat("0.0"))
          .setSpeedUnit(ChronoUnit.MINUTES).setUpdateIntervalMillis(500).build();
    }
    return new ToyProgress(bar, out, total);
  }

  /** Whether a bar can be drawn: human output on an interactive terminal. */
  static boolean interactive(Output out) {
    return !out.json() && terminal();
  }

  /**
   * Whether stdin and stdout are a terminal: {@code System.console()} exists, and (from JDK 22, where a console
   * object exists even when redirected) {@code Console.isTerminal()} says so. The build targets JDK 21, so that
   * method is looked up at run time.
   */
  private static boolean terminal() {
    java.io.Console c = System.console();
    if (c == null) {
      return false;
    }
    try {
      return (Boolean) java.io.Console.class.getMethod("isTerminal").invoke(c);
    } catch (NoSuchMethodException e) {
      return true; // JDK 21: a console object exists only on a terminal
    } catch (ReflectiveOperationException | RuntimeException e) {
      return false;
    }
  }

  /**
   * One toy finished.
   *
   * @param line what the line fallback prints for it
   * @param t the toy's t, shown beside the bar
   */
  void step(String line, double t) {
    done++;
    if (bar != null) {
      bar.setExtraMessage(String.format(Locale.ROOT, " last t = %.3g", t));
      bar.step();
      return;
    }
    double elapsed = (System.nanoTime() - start) / 1e9;
    double eta = elapsed / done * (total - done);
    out.note("%s   [%d/%d, %.2f toys/min, ETA %s]", line, done, total, 60 * done / elapsed,
        format(Duration.ofSeconds(Math.round(eta))));
  }

  private static String format(Duration d) {
    return d.toHours() > 0 ? String.format(Locale.ROOT, "%dh%02dm", d.toHours(), d.toMinutesPart())
        : d.toMinutes() > 0 ? String.format(Locale.ROOT, "%dm%02ds", d.toMinutes(), d.toSecondsPart())
        : d.toSeconds() + " s";
  }

  @Override
  public void close() {
    if (bar != null) {
      bar.close();
    }
  }
}
