package triage.shell;

import java.awt.Color;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import org.jfree.chart.JFreeChart;
import org.jfree.chart.axis.NumberAxis;
import org.jfree.chart.plot.XYPlot;
import org.jfree.chart.renderer.LookupPaintScale;
import org.jfree.chart.renderer.xy.XYBlockRenderer;
import org.jfree.chart.title.PaintScaleLegend;
import org.jfree.data.xy.DefaultXYZDataset;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.Selection;
import triage.shell.plot.HistogramChart;

/** {@code triage map}: a 2D map of the pull of observed over expected, e.g. over two detector coordinates. */
@Command(name = "map", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Map two columns (for example the photon's η and φ) for a selection: per cell the observed count, "
        + "the expected yield and the pull (n − b)/√(b + σ_b²), drawn in the terminal as shades of the pull "
        + "(' ' below 1, '░' 1–2, '▒' 2–3, '▓' 3–5, '█' above 5; '-' for deficits below −2) and optionally as PNG/SVG; "
        + "then a hot-spot scan: the squares of cells with the largest local Poisson excess (Z_Bi), with the "
        + "trials correction over every square tried."},
    footer = ExitCodes.FOOTER)
public final class MapCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Hot-spot square size. */
  @Option(names = "--hot-spot-size", defaultValue = "3", paramLabel = "K",
      description = "Largest square of cells the hot-spot scan tries (default: ${DEFAULT-VALUE}).")
  int hotSpotSize;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** X column. */
  @Option(names = "--x", required = true, paramLabel = "COL", description = "Horizontal column.")
  String x;

  /** Y column. */
  @Option(names = "--y", required = true, paramLabel = "COL", description = "Vertical column.")
  String y;

  /** Condition. */
  @Option(names = "--where", paramLabel = "CONDITION", description = "The selection (default: every event).")
  String where;

  /** Bins. */
  @Option(names = "--bins", defaultValue = "24", paramLabel = "N", description = "Cells per axis (default: ${DEFAULT-VALUE}).")
  int bins;

  /** PNG. */
  @Option(names = "--png", paramLabel = "FILE", description = "Also save the map as PNG.")
  Path png;

  /** SVG. */
  @Option(names = "--svg", paramLabel = "FILE", description = "Also save the map as SVG.")
  Path svg;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Output.prepareFile(png);
    Output.prepareFile(svg);
    if (bins < 1 || bins > 200) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--bins must be between 1 and 200");
    }
    if (hotSpotSize < 1) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--hot-spot-size must be at least 1");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      String observed = Roles.name(m, Role.OBSERVED);
      String reference = Roles.name(m, Role.REFERENCE);
      Selection selection = where == null ? Selection.all() : store.where(where);
      BitSet om = store.mask(selection, observed);
      BitSet rm = store.mask(selection, reference);
      double[][] ov = store.columns(observed, List.of(x, y));
      double[][] rv = store.columns(reference, List.of(x, y));
      double[] w = store.weights(reference);
      double[] range = {Double.POSITIVE_INFINITY, Double.NEGATIVE_INFINITY, Double.POSITIVE_INFINITY,
          Double.NEGATIVE_INFINITY};
      for (BitSet mask : List.of(om, rm)) {
        double[][] v = mask == om ? ov : rv;
        for (int i = mask.nextSetBit(0); i >= 0; i = mask.nextSetBit(i + 1)) {
          range[0] = Math.min(range[0], v[0][i]);
          range[1] = Math.max(range[1], v[0][i]);
          range[2] = Math.min(range[2], v[1][i]);
          range[3] = Math.max(range[3], v[1][i]);
        }
      }
      if (!(range[0] < range[1]) || !(range[2] < range[3])) {
        throw new triage.core.sample.InputException(null, "the selection has no spread in " + x + " or " + y);
      }
      range[1] = Math.nextUp(range[1]);
      range[3] = Math.nextUp(range[3]);
      long[][] n = new long[bins][bins];
      double[][] b = new double[bins][bins];
      double[][] b2 = new double[bins][bins];
      for (int i = om.nextSetBit(0); i >= 0; i = om.nextSetBit(i + 1)) {
        n[cell(ov[0][i], range[0], range[1])][cell(ov[1][i], range[2], range[3])]++;
      }
      for (int i = rm.nextSetBit(0); i >= 0; i = rm.nextSetBit(i + 1)) {
        int cx = cell(rv[0][i], range[0], range[1]);
        int cy = cell(rv[1][i], range[2], range[3]);
        b[cx][cy] += w[i];
        b2[cx][cy] += w[i] * w[i];
      }
      double[][] pull = new double[bins][bins];
      List<Map<String, Object>> cells = new ArrayList<>();
      double worst = 0;
      int[] worstCell = {0, 0};
      for (int cx = 0; cx < bins; cx++) {
        for (int cy = 0; cy < bins; cy++) {
          double var = b[cx][cy] + b2[cx][cy];
          pull[cx][cy] = var > 0 ? (n[cx][cy] - b[cx][cy]) / Math.sqrt(var) : (n[cx][cy] > 0 ? 10 : 0);
          if (pull[cx][cy] > worst) {
            worst = pull[cx][cy];
            worstCell = new int[] {cx, cy};
          }
          if (n[cx][cy] > 0 || b[cx][cy] > 0) {
            Map<String, Object> c = new LinkedHashMap<>();
            c.put("x", edge(range[0], range[1], cx));
            c.put("y", edge(range[2], range[3], cy));
            c.put("observed", n[cx][cy]);
            c.put("expected", b[cx][cy]);
            c.put("pull", pull[cx][cy]);
            cells.add(c);
          }
        }
      }
      o.say("pull of observed over expected: %s (across, %.4g … %.4g) against %s (up, %.4g … %.4g)%s", x, range[0],
          range[1], y, range[2], range[3], where == null ? "" : " for " + where);
      for (int cy = bins - 1; cy >= 0; cy--) {
        StringBuilder line = new StringBuilder(String.format(java.util.Locale.ROOT, "%10.4g │", edge(range[2],
            range[3], cy)));
        for (int cx = 0; cx < bins; cx++) {
          line.append(shade(pull[cx][cy])).append(shade(pull[cx][cy]));
        }
        o.say("%s", line);
      }
      o.say("%10s └%s", "", "─".repeat(2 * bins));
      o.say("largest pull %.2f at %s ≈ %.4g, %s ≈ %.4g (local; a map of %d cells will show some 3σ cells by chance)",
          worst, x, edge(range[0], range[1], worstCell[0]), y, edge(range[2], range[3], worstCell[1]), bins * bins);
      triage.core.region.HotSpots.Result hot = triage.core.region.HotSpots.scan(n, b, b2, hotSpotSize, 5);
      o.say("hot spots: squares of 1 to %d cells, %d tried; global p = min(1, trials × local p) (conservative)",
          hotSpotSize, hot.trials());
      o.say("  %-22s %-22s %9s %10s %8s %8s", x, y, "observed", "expected", "local Z", "global Z");
      List<Map<String, Object>> spots = new ArrayList<>();
      for (triage.core.region.HotSpots.Spot h : hot.spots()) {
        String xs = String.format(java.util.Locale.ROOT, "[%.4g, %.4g)", edge(range[0], range[1], h.x()),
            edge(range[0], range[1], h.x() + h.size()));
        String ys = String.format(java.util.Locale.ROOT, "[%.4g, %.4g)", edge(range[2], range[3], h.y()),
            edge(range[2], range[3], h.y() + h.size()));
        o.say("  %-22s %-22s %9d %10.4g %8.2f %8.2f", xs, ys, h.observed(), h.expected(), h.localZ(), h.globalZ());
        Map<String, Object> e = new LinkedHashMap<>();
        e.put("xLo", edge(range[0], range[1], h.x()));
        e.put("xHi", edge(range[0], range[1], h.x() + h.size()));
        e.put("yLo", edge(range[2], range[3], h.y()));
        e.put("yHi", edge(range[2], range[3], h.y() + h.size()));
        e.put("cells", h.size());
        e.put("observed", h.observed());
        e.put("expected", h.expected());
        e.put("expectedStatError", h.expectedError());
        e.put("localZ", h.localZ());
        e.put("globalP", h.globalP());
        e.put("globalZ", h.globalZ());
        spots.add(e);
      }
      if (hot.observedWithoutReference() > 0) {
        o.say("note: %d observed events lie in cells without reference events (no expectation: not scanned)",
            hot.observedWithoutReference());
      }
      List<String> plots = new ArrayList<>();
      if (png != null || svg != null) {
        JFreeChart chart = chart(range, pull);
        if (png != null) {
          HistogramChart.png(chart, png, 800, 700);
          o.say("saved %s", png);
          plots.add(png.toString());
        }
        if (svg != null) {
          HistogramChart.svg(chart, svg, 800, 700);
          o.say("saved %s", svg);
          plots.add(svg.toString());
        }
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "map");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("x", x);
      result.put("y", y);
      result.put("where", where);
      result.put("bins", bins);
      result.put("range", range);
      result.put("cells", cells);
      result.put("hotSpotTrials", hot.trials());
      result.put("hotSpots", spots);
      result.put("observedWithoutReference", hot.observedWithoutReference());
      result.put("plots", plots);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /** The cell of a value (cells by their printed edges, as a histogram's bins); values outside go to the edge cells. */
  private int cell(double v, double lo, double hi) {
    return Math.min(bins - 1, Math.max(0, triage.index.Histogram.binOf(v, bins, lo, hi) - 1));
  }

  private double edge(double lo, double hi, int c) {
    return lo + (hi - lo) * c / bins;
  }

  private static char shade(double pull) {
    if (pull < -2) {
      return '-';
    }
    if (pull < 1) {
      return ' ';
    }
    if (pull < 2) {
      return '░';
    }
    if (pull < 3) {
      return '▒';
    }
    return pull < 5 ? '▓' : '█';
  }

  private JFreeChart chart(double[] range, double[][] pull) {
    System.setProperty("java.awt.headless", "true");
    double[][] data = new double[3][bins * bins];
    int k = 0;
    for (int cx = 0; cx < bins; cx++) {
      for (int cy = 0; cy < bins; cy++) {
        data[0][k] = edge(range[0], range[1], cx) + 0.5 * (range[1] - range[0]) / bins;
        data[1][k] = edge(range[2], range[3], cy) + 0.5 * (range[3] - range[2]) / bins;
        data[2][k] = Math.max(-5, Math.min(5, pull[cx][cy]));
        k++;
      }
    }
    DefaultXYZDataset dataset = new DefaultXYZDataset();
    dataset.addSeries("pull", data);
    XYBlockRenderer renderer = new XYBlockRenderer();
    renderer.setBlockWidth((range[1] - range[0]) / bins);
    renderer.setBlockHeight((range[3] - range[2]) / bins);
    LookupPaintScale scale = new LookupPaintScale(-5, 5.0001, Color.WHITE);
    for (int i = -5; i < 5; i++) {
      float t = (i + 5) / 10f;
      scale.add(i, i < 0 ? new Color(1 - 0.6f * (1 - t), 1 - 0.6f * (1 - t), 1f) : new Color(1f, 1 - t, 1 - t));
    }
    renderer.setPaintScale(scale);
    NumberAxis xAxis = new NumberAxis(x);
    NumberAxis yAxis = new NumberAxis(y);
    xAxis.setAutoRangeIncludesZero(false);
    yAxis.setAutoRangeIncludesZero(false);
    XYPlot plot = new XYPlot(dataset, xAxis, yAxis, renderer);
    JFreeChart chart = new JFreeChart("pull of observed over expected" + (where == null ? "" : ": " + where),
        JFreeChart.DEFAULT_TITLE_FONT, plot, false);
    NumberAxis scaleAxis = new NumberAxis("pull");
    scaleAxis.setRange(-5, 5);
    PaintScaleLegend legend = new PaintScaleLegend(scale, scaleAxis);
    legend.setPosition(org.jfree.chart.ui.RectangleEdge.RIGHT);
    chart.addSubtitle(legend);
    chart.setBackgroundPaint(Color.WHITE);
    return chart;
  }
}
