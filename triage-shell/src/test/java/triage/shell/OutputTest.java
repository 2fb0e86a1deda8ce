package triage.shell;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.List;
import org.junit.jupiter.api.Test;
import picocli.CommandLine;

/** Text fitted to the terminal's width. */
class OutputTest {
  @CommandLine.Command(name = "t")
  static final class Dummy implements Runnable {
    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public void run() {
      // not run
    }
  }

  private static String fitted(int width, String... lines) {
    var previous = Output.terminalWidth;
    Output.terminalWidth = () -> width;
    try {
      Dummy d = new Dummy();
      CommandLine cli = new CommandLine(d);
      StringWriter s = new StringWriter();
      cli.setOut(new PrintWriter(s));
      Output o = new Output(d.spec, false);
      for (String line : lines) {
        o.say(line);
      }
      o.result(null);
      return s.toString();
    } finally {
      Output.terminalWidth = previous;
    }
  }

  @Test
  void proseWrapsAtSpacesKeepingEveryWord() {
    String prose = "  note: the significance is local: it is not corrected for the look-elsewhere effect, and "
        + "it is biased where the selection was tuned on these data.";
    String shown = fitted(40, prose);
    List<String> lines = shown.lines().toList();
    assertTrue(lines.size() > 2, shown);
    for (String line : lines) {
      assertTrue(line.length() <= 40, line);
    }
    assertTrue(lines.get(1).startsWith("    "), "continuation indented: " + shown);
    assertEquals(prose.strip().replaceAll("\\s+", " "), shown.strip().replaceAll("\\s+", " "));
  }

  @Test
  void tableRowsAreCutAndSaySo() {
    String row = "  met              0.9756     0.4987  10.1550    0.60471  1.56e-23";
    String shown = fitted(30, row, "short");
    List<String> lines = shown.lines().toList();
    assertEquals(row.substring(0, 29) + "…", lines.get(0));
    assertEquals("short", lines.get(1));
    assertTrue(shown.replaceAll("\\s+", " ").contains("cut at the terminal's width of 30 columns"), shown);
  }

  @Test
  void noLimitLeavesLinesWhole() {
    String row = "x".repeat(300) + "  y";
    assertEquals(row + System.lineSeparator(), fitted(0, row));
  }

  @Test
  void pValuesThatRoundToZeroAreNotShownAsZero() {
    // χ² = 1668.9 for 15 dof has an upper tail near 1e-345 (below the smallest double, so it rounds to 0)
    assertEquals("< 1e-300", Output.p(0.0));
    assertEquals("< 1e-300", Output.pEquals(0.0));
    assertEquals("= 3.15e-93", Output.pEquals(3.15e-93));
    assertEquals("0.0500", Output.p(0.05));
  }
}
