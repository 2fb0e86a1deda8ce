package triage.shell.plot;

import java.awt.BasicStroke;
import java.awt.Color;
import java.awt.Rectangle;
import java.awt.image.BufferedImage;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import javax.imageio.ImageIO;
import org.jfree.chart.JFreeChart;
import org.jfree.chart.axis.NumberAxis;
import org.jfree.chart.plot.CombinedDomainXYPlot;
import org.jfree.chart.plot.XYPlot;
import org.jfree.chart.renderer.xy.XYErrorRenderer;
import org.jfree.chart.renderer.xy.XYStepRenderer;
import org.jfree.data.xy.XYIntervalSeries;
import org.jfree.data.xy.XYIntervalSeriesCollection;
import org.jfree.data.xy.XYSeries;
import org.jfree.data.xy.XYSeriesCollection;
import org.jfree.svg.SVGGraphics2D;

/**
 * A histogram of observed counts (points with √n error bars) over the expected reference yield (steps), with the
 * pulls below, written as PNG or SVG.
 */
public final class HistogramChart {
  private HistogramChart() {
    // no instance
  }

  /**
   * Builds the chart.
   *
   * @param title the title
   * @param column the x-axis label
   * @param edges bin edges, length bins + 1
   * @param observed observed counts per bin
   * @param expected expected yields per bin
   * @param pulls pulls per bin
   */
  public static JFreeChart chart(String title, String column, double[] edges, long[] observed, double[] expected,
      double[] pulls) {
    System.setProperty("java.awt.headless", "true");
    int bins = observed.length;
    XYSeries steps = new XYSeries("expected (reference)", false, true);
    for (int i = 0; i < bins; i++) {
      steps.add(edges[i], expected[i]);
    }
    steps.add(edges[bins], expected[bins - 1]);
    XYIntervalSeries points = new XYIntervalSeries("observed");
    XYIntervalSeries pullPoints = new XYIntervalSeries("pull");
    for (int i = 0; i < bins; i++) {
      double x = 0.5 * (edges[i] + edges[i + 1]);
      double e = Math.sqrt(observed[i]);
      points.add(x, edges[i], edges[i + 1], observed[i], observed[i] - e, observed[i] + e);
      if (Double.isFinite(pulls[i])) {
        pullPoints.add(x, edges[i], edges[i + 1], pulls[i], pulls[i], pulls[i]);
      }
    }
    NumberAxis xAxis = new NumberAxis(column);
    xAxis.setAutoRangeIncludesZero(false);
    XYPlot main = new XYPlot(new XYSeriesCollection(steps), null, new NumberAxis("events per bin"),
        new XYStepRenderer());
    main.getRenderer().setSeriesPaint(0, new Color(40, 90, 160));
    main.getRenderer().setSeriesStroke(0, new BasicStroke(1.5f));
    XYErrorRenderer obs = new XYErrorRenderer();
    obs.setSeriesPaint(0, Color.BLACK);
    obs.setDrawXError(false);
    main.setDataset(1, new XYIntervalSeriesCollection() {
      {
        addSeries(points);
      }
    });
    main.setRenderer(1, obs);
    XYErrorRenderer pullRenderer = new XYErrorRenderer();
    pullRenderer.setSeriesPaint(0, new Color(160, 40, 40));
    XYPlot pull = new XYPlot(new XYIntervalSeriesCollection() {
      {
        addSeries(pullPoints);
      }
    }, null, new NumberAxis("pull"), pullRenderer);
    CombinedDomainXYPlot both = new CombinedDomainXYPlot(xAxis);
    both.add(main, 3);
    both.add(pull, 1);
    JFreeChart chart = new JFreeChart(title, JFreeChart.DEFAULT_TITLE_FONT, both, true);
    chart.setBackgroundPaint(Color.WHITE);
    return chart;
  }

  /** Writes PNG; a file that cannot be written is invalid input naming it. */
  public static void png(JFreeChart chart, Path file, int width, int height) {
    BufferedImage image = chart.createBufferedImage(width, height);
    // through our own stream: given a File, the JDK's writer prints a trace of its own when the file cannot be
    // opened, reports that without the system's reason, and deletes an empty folder in the way
    try (java.io.OutputStream out = Files.newOutputStream(file)) {
      if (!ImageIO.write(image, "png", out)) {
        throw new IOException("no PNG writer");
      }
    } catch (IOException e) {
      throw cannotWrite(file, e);
    }
  }

  /** Writes SVG; a file that cannot be written is invalid input naming it. */
  public static void svg(JFreeChart chart, Path file, int width, int height) {
    SVGGraphics2D g = new SVGGraphics2D(width, height);
    chart.draw(g, new Rectangle(0, 0, width, height));
    try {
      Files.writeString(file, g.getSVGDocument());
    } catch (IOException e) {
      throw cannotWrite(file, e);
    }
  }

  /** A plot file that cannot be written (its folder missing or a file, no permission), as invalid input. */
  static triage.core.sample.InputException cannotWrite(Path file, IOException e) {
    String why = e instanceof java.nio.file.FileSystemException fs && fs.getReason() != null ? fs.getReason()
        : e instanceof java.nio.file.FileAlreadyExistsException ? "a file is in the way of a folder"
        : e instanceof java.nio.file.NoSuchFileException ? "its folder does not exist"
        : e instanceof java.nio.file.AccessDeniedException ? "permission denied"
        : e.getMessage() != null ? e.getMessage() : e.getClass().getSimpleName();
    return new triage.core.sample.InputException(file, "cannot write the plot here: " + why);
  }
}
