package triage.shell.plot;

import java.awt.BasicStroke;
import java.awt.Color;
import java.io.IOException;
import java.nio.file.Path;
import java.util.List;
import java.util.Locale;
import org.apache.commons.statistics.distribution.ChiSquaredDistribution;
import org.jfree.chart.JFreeChart;
import org.jfree.chart.axis.LogAxis;
import org.jfree.chart.axis.NumberAxis;
import org.jfree.chart.plot.ValueMarker;
import org.jfree.chart.plot.XYPlot;
import org.jfree.chart.renderer.xy.StandardXYBarPainter;
import org.jfree.chart.renderer.xy.XYBarRenderer;
import org.jfree.chart.renderer.xy.XYLineAndShapeRenderer;
import org.jfree.chart.ui.RectangleAnchor;
import org.jfree.chart.ui.TextAnchor;
import org.jfree.data.xy.XYIntervalSeries;
import org.jfree.data.xy.XYIntervalSeriesCollection;
import org.jfree.data.xy.XYSeries;
import org.jfree.data.xy.XYSeriesCollection;
import triage.core.calibration.ClipTuning;

/**
 * Calibration charts: the toys' t histogram with χ² densities and t_obs marked, and the clip-tuning curves. Written
 * as PNG and SVG by {@link HistogramChart#png} and {@link HistogramChart#svg}.
 */
public final class ToyChart {
  /** Colours of successive clips. */
  private static final Color[] PALETTE = {new Color(40, 90, 160), new Color(200, 90, 20), new Color(40, 140, 60),
      new Color(160, 40, 40), new Color(110, 60, 160), new Color(120, 90, 50), new Color(200, 80, 160),
      new Color(90, 90, 90)};

  private ToyChart() {
    // no instance
  }

  /**
   * The toy histogram.
   *
   * @param title the title
   * @param toys null toys' t
   * @param observed t_obs (NaN: not marked)
   * @param fittedDof the fitted χ² degrees of freedom (NaN: no curve)
   * @param parameters the parameter count (χ²(k) curve)
   * @param signal signal toys' t drawn as a second histogram (null: none)
   */
  public static JFreeChart toys(String title, double[] toys, double observed, double fittedDof, int parameters,
      double[] signal) {
    System.setProperty("java.awt.headless", "true");
    double hi = 0;
    for (double t : toys) {
      hi = Math.max(hi, t);
    }
    if (signal != null) {
      for (double t : signal) {
        hi = Math.max(hi, t);
      }
    }
    // The bins span the toys (so they stay readable when t_obs lies far beyond them); the axis reaches t_obs.
    double toyHi = hi > 0 ? 1.05 * hi : 1;
    if (Double.isFinite(observed)) {
      hi = Math.max(hi, observed);
    }
    hi = hi > 0 ? 1.05 * hi : 1;
    double lo = 0;
    for (double t : toys) {
      lo = Math.min(lo, t);
    }
    int bins = Math.max(10, Math.min(50, (int) Math.round(Math.sqrt(toys.length) * 2)));
    double width = (toyHi - lo) / bins;
    XYIntervalSeriesCollection bars = new XYIntervalSeriesCollection();
    bars.addSeries(histogram("null toys (" + toys.length + ")", toys, lo, width, bins));
    if (signal != null && signal.length > 0) {
      bars.addSeries(histogram("signal toys (" + signal.length + ")", signal, lo, width, bins));
    }
    XYBarRenderer barRenderer = new XYBarRenderer();
    barRenderer.setBarPainter(new StandardXYBarPainter());
    barRenderer.setShadowVisible(false);
    barRenderer.setDrawBarOutline(true);
    barRenderer.setSeriesPaint(0, new Color(150, 170, 200, 200));
    barRenderer.setSeriesOutlinePaint(0, new Color(40, 90, 160));
    barRenderer.setSeriesPaint(1, new Color(230, 150, 90, 140));
    barRenderer.setSeriesOutlinePaint(1, new Color(200, 90, 20));
    NumberAxis x = new NumberAxis("test statistic t");
    x.setRange(lo, hi);
    XYPlot plot = new XYPlot(bars, x, new NumberAxis("toys per bin"), barRenderer);
    XYSeriesCollection curves = new XYSeriesCollection();
    double scale = toys.length * width;
    if (Double.isFinite(fittedDof)) {
      curves.addSeries(density(String.format(Locale.ROOT, "fitted χ²(%.2f)", fittedDof), fittedDof, lo,
          curveHi(toyHi, hi, fittedDof), scale));
    }
    curves.addSeries(density("χ²(" + parameters + " parameters)", parameters, lo, curveHi(toyHi, hi, parameters),
        scale));
    XYLineAndShapeRenderer lines = new XYLineAndShapeRenderer(true, false);
    int s = 0;
    if (Double.isFinite(fittedDof)) {
      lines.setSeriesPaint(s, Color.BLACK);
      lines.setSeriesStroke(s++, new BasicStroke(1.8f));
    }
    lines.setSeriesPaint(s, new Color(40, 140, 60));
    lines.setSeriesStroke(s, new BasicStroke(1.8f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10,
        new float[] {6, 4}, 0));
    plot.setDataset(1, curves);
    plot.setRenderer(1, lines);
    if (Double.isFinite(observed)) {
      ValueMarker m = new ValueMarker(observed, new Color(180, 20, 20), new BasicStroke(2f));
      m.setLabel(String.format(Locale.ROOT, "t_obs = %.4g", observed));
      // Label on the side with room: left of the line when it sits at the right of the plot.
      boolean right = observed > lo + 0.7 * (hi - lo);
      m.setLabelAnchor(right ? RectangleAnchor.TOP_LEFT : RectangleAnchor.TOP_RIGHT);
      m.setLabelTextAnchor(right ? TextAnchor.TOP_RIGHT : TextAnchor.TOP_LEFT);
      m.setLabelPaint(new Color(180, 20, 20));
      plot.addDomainMarker(m);
    }
    JFreeChart chart = new JFreeChart(title, JFreeChart.DEFAULT_TITLE_FONT, plot, true);
    chart.setBackgroundPaint(Color.WHITE);
    return chart;
  }

  /**
   * The clip-tuning curves: median (solid) and 97.5% quantile (dashed) of toy t against the iteration cap, one
   * colour per clip.
   */
  public static JFreeChart tuning(String title, List<ClipTuning.Curve> curves) {
    System.setProperty("java.awt.headless", "true");
    XYSeriesCollection data = new XYSeriesCollection();
    XYLineAndShapeRenderer r = new XYLineAndShapeRenderer(true, true);
    int s = 0;
    for (int c = 0; c < curves.size(); c++) {
      ClipTuning.Curve curve = curves.get(c);
      String name = String.format(Locale.ROOT, "C = %s", curve.clip());
      XYSeries median = new XYSeries(name + " median" + (curve.plateau() ? "" : " (overfits)"), false, true);
      XYSeries upper = new XYSeries(name + " 97.5%", false, true);
      for (int j = 0; j < curve.caps().length; j++) {
        median.add(curve.caps()[j], curve.median()[j]);
        upper.add(curve.caps()[j], curve.upper()[j]);
      }
      data.addSeries(median);
      data.addSeries(upper);
      Color col = PALETTE[c % PALETTE.length];
      r.setSeriesPaint(s, col);
      r.setSeriesStroke(s++, new BasicStroke(1.8f));
      r.setSeriesPaint(s, col);
      r.setSeriesStroke(s++, new BasicStroke(1.4f, BasicStroke.CAP_BUTT, BasicStroke.JOIN_MITER, 10,
          new float[] {6, 4}, 0));
    }
    LogAxis x = new LogAxis("iteration cap");
    x.setSmallestValue(0.5);
    // One tick per decade, labelled as plain numbers (10, 100, 1,000) rather than powers; where the caps span less
    // than two decades, a tick at every power of two (16, 32, 64, 128, ...), so that more than one is labelled.
    double lo = Double.POSITIVE_INFINITY;
    double hi = 0;
    for (ClipTuning.Curve curve : curves) {
      for (double cap : curve.caps()) {
        lo = Math.min(lo, cap);
        hi = Math.max(hi, cap);
      }
    }
    x.setTickUnit(new org.jfree.chart.axis.NumberTickUnit(hi < 100 * lo ? Math.log10(2) : 1));
    x.setNumberFormatOverride(new java.text.DecimalFormat("#,##0", java.text.DecimalFormatSymbols.getInstance(
        Locale.ROOT)));
    NumberAxis y = new NumberAxis("toy t (median solid, 97.5% quantile dashed)");
    XYPlot plot = new XYPlot(data, x, y, r);
    JFreeChart chart = new JFreeChart(title, JFreeChart.DEFAULT_TITLE_FONT, plot, true);
    chart.setBackgroundPaint(Color.WHITE);
    return chart;
  }

  /** Writes PREFIX.png and PREFIX.svg; returns both paths. */
  public static List<Path> write(JFreeChart chart, Path prefix) {
    Path png = prefix.resolveSibling(prefix.getFileName() + ".png");
    Path svg = prefix.resolveSibling(prefix.getFileName() + ".svg");
    Path folder = png.toAbsolutePath().getParent();
    try {
      java.nio.file.Files.createDirectories(folder);
    } catch (IOException e) {
      throw HistogramChart.cannotWrite(png, e);
    }
    HistogramChart.png(chart, png, 900, 600);
    HistogramChart.svg(chart, svg, 900, 600);
    return List.of(png, svg);
  }

  /** Where a χ² curve is drawn to: far enough past the toys and its own bulk, not beyond the axis. */
  private static double curveHi(double toyHi, double axisHi, double dof) {
    return Math.min(axisHi, Math.max(2 * toyHi, dof + 10 * Math.sqrt(2 * dof)));
  }

  private static XYIntervalSeries histogram(String name, double[] values, double lo, double width, int bins) {
    long[] counts = new long[bins];
    for (double v : values) {
      int b = (int) Math.floor((v - lo) / width);
      counts[Math.max(0, Math.min(bins - 1, b))]++;
    }
    XYIntervalSeries s = new XYIntervalSeries(name);
    for (int i = 0; i < bins; i++) {
      double a = lo + i * width;
      s.add(a + 0.5 * width, a, a + width, counts[i], counts[i], counts[i]);
    }
    return s;
  }

  private static XYSeries density(String name, double dof, double lo, double hi, double scale) {
    ChiSquaredDistribution d = ChiSquaredDistribution.of(dof);
    XYSeries s = new XYSeries(name, false, true);
    int points = 300;
    for (int i = 0; i <= points; i++) {
      double t = Math.max(lo, 0) + (hi - Math.max(lo, 0)) * i / points;
      double y = d.density(t);
      if (Double.isFinite(y)) {
        s.add(t, scale * y);
      }
    }
    return s;
  }
}
