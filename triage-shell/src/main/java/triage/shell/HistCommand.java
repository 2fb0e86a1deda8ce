package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.BitSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.ToolVersion;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Histogram;
import triage.index.Manifest;
import triage.index.Selection;
import triage.shell.plot.HistogramChart;

/** {@code triage hist}: a column's histogram for a selection, observed against expected. */
@Command(name = "hist", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Histogram a column for a selection: observed counts against the expected reference yield, with "
        + "the ratio and the pull (n − b)/√(b + σ_b²) per bin, drawn in the terminal and optionally saved as PNG "
        + "and SVG."},
    footer = ExitCodes.FOOTER)
public final class HistCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Index. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The index folder.")
  Path index;

  /** Column. */
  @Option(names = "--column", required = true, paramLabel = "COL", description = "The column (or score:VERSION).")
  String column;

  /** Condition. */
  @Option(names = "--where", paramLabel = "CONDITION", description = "The selection (default: every event).")
  String where;

  /** Bins. */
  @Option(names = "--bins", defaultValue = "20", paramLabel = "N", description = "Bins (default: ${DEFAULT-VALUE}).")
  int bins;

  /** Range. */
  @Option(names = "--range", paramLabel = "LO:HI",
      description = "Histogram range [LO, HI) (default: the observed events' range in the selection).")
  String range;

  /** Comparison. */
  @Option(names = "--pair", defaultValue = "discovery", paramLabel = "discovery|follow-up",
      description = "Which observed/reference pair (default: ${DEFAULT-VALUE}).")
  String pair;

  /** PNG. */
  @Option(names = "--png", paramLabel = "FILE", description = "Also save the plot as PNG.")
  Path png;

  /** SVG. */
  @Option(names = "--svg", paramLabel = "FILE", description = "Also save the plot as SVG.")
  Path svg;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Output.prepareFile(png);
    Output.prepareFile(svg);
    if (bins < 1 || bins > 10_000) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--bins must be between 1 and 10000");
    }
    if (!pair.equals("discovery") && !pair.equals("follow-up")) {
      throw new CommandLine.ParameterException(spec.commandLine(), "--pair must be discovery or follow-up, not '"
          + pair + "'");
    }
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Role obsRole = pair.equals("follow-up") ? Role.FOLLOWUP_OBSERVED : Role.OBSERVED;
      Role refRole = pair.equals("follow-up") ? Role.FOLLOWUP_REFERENCE : Role.REFERENCE;
      int obs = Roles.ordinal(m, obsRole);
      int ref = Roles.ordinal(m, refRole);
      Selection selection = where == null ? Selection.all() : store.where(where);
      double lo;
      double hi;
      if (range != null) {
        String[] parts = range.split(":", -1);
        try {
          if (parts.length != 2) {
            throw new IllegalArgumentException("two parts");
          }
          lo = Double.parseDouble(parts[0]);
          hi = Double.parseDouble(parts[1]);
        } catch (RuntimeException e) {
          throw new CommandLine.ParameterException(spec.commandLine(), "--range must be LO:HI, e.g. 200:1200");
        }
      } else {
        String name = m.samples().get(obs).name();
        BitSet mask = store.mask(selection, name);
        double[] values = store.columns(name, List.of(column))[0];
        lo = Double.POSITIVE_INFINITY;
        hi = Double.NEGATIVE_INFINITY;
        for (int i = mask.nextSetBit(0); i >= 0; i = mask.nextSetBit(i + 1)) {
          lo = Math.min(lo, values[i]);
          hi = Math.max(hi, values[i]);
        }
        if (mask.isEmpty()) {
          // no range to derive: before, 20 empty bins on an invented [0, 1) were drawn without a word
          long refSelected = store.sums(selection).get(ref).count();
          throw new triage.core.sample.InputException(null, String.format(java.util.Locale.ROOT, "hist: the "
              + "selection keeps no %s event (and %d %s events), so no range can be derived from the data; give "
              + "--range LO:HI to see the expectation there", name, refSelected, m.samples().get(ref).name()));
        }
        if (!(lo < hi)) {
          lo = lo - 0.5;
          hi = lo + 1;
        }
        hi = Math.nextUp(hi);
      }
      if (!(lo < hi) || !Double.isFinite(lo) || !Double.isFinite(hi) || !Double.isFinite(hi - lo)) {
        throw new CommandLine.ParameterException(spec.commandLine(), "--range needs finite LO < HI (and HI − LO "
            + "finite); the data's own range is " + (range == null ? "[" + lo + ", " + hi + ")" : "not used"));
      }
      List<Histogram> h = store.histogram(selection, column, bins, lo, hi);
      Histogram ho = h.get(obs);
      Histogram hr = h.get(ref);
      double[] edges = new double[bins + 1];
      long[] n = new long[bins];
      double[] b = new double[bins];
      double[] pulls = new double[bins];
      List<Map<String, Object>> rows = new ArrayList<>();
      double max = 1;
      for (int i = 0; i < bins; i++) {
        edges[i] = Histogram.edge(i, bins, lo, hi);
        n[i] = ho.counts()[i + 1];
        b[i] = hr.sumOfWeights()[i + 1];
        double var = b[i] + hr.sumOfSquaredWeights()[i + 1];
        pulls[i] = var > 0 ? (n[i] - b[i]) / Math.sqrt(var) : Double.NaN;
        max = Math.max(max, Math.max(n[i], b[i]));
      }
      edges[bins] = hi;
      o.say("%s for %s (%s: %s vs %s)", column, where == null ? "every event" : where, pair,
          m.samples().get(obs).name(), m.samples().get(ref).name());
      o.say("%-23s %8s %10s %7s %6s  %s", "bin", "observed", "expected", "ratio", "pull",
          "█ observed, │ expected");
      // The bars take what the terminal leaves after the 62 columns of numbers (40 when unknown).
      int width = o.width() > 0 ? Math.max(10, Math.min(60, o.width() - 63)) : 40;
      for (int i = 0; i < bins; i++) {
        double ratio = b[i] > 0 ? n[i] / b[i] : Double.NaN;
        o.say("[%9.4g, %9.4g) %8d %10.4g %7.3f %6.2f  %s", edges[i], edges[i + 1], n[i], b[i], ratio, pulls[i],
            bar(n[i] / max * width, b[i] / max * width, width));
        Map<String, Object> row = new LinkedHashMap<>();
        row.put("lo", edges[i]);
        row.put("hi", edges[i + 1]);
        row.put("observed", n[i]);
        row.put("expected", b[i]);
        row.put("expectedStatError", Math.sqrt(hr.sumOfSquaredWeights()[i + 1]));
        row.put("ratio", ratio);
        row.put("pull", pulls[i]);
        rows.add(row);
      }
      o.say("outside the range: observed %d below, %d above; expected %.4g below, %.4g above", ho.counts()[0],
          ho.counts()[bins + 1], hr.sumOfWeights()[0], hr.sumOfWeights()[bins + 1]);
      List<String> notes = new ArrayList<>();
      long observedIn = 0;
      double squaresIn = 0;
      for (int i = 1; i <= bins; i++) {
        observedIn += ho.counts()[i];
        squaresIn += hr.sumOfSquaredWeights()[i];
      }
      if (observedIn == 0 && squaresIn == 0) {
        long outside = ho.counts()[0] + ho.counts()[bins + 1];
        notes.add(String.format(java.util.Locale.ROOT, "no event of the selection lies in [%s, %s), observed "
            + "or reference: every bin is empty and its ratio and pull undefined%s", lo, hi, outside > 0
            ? " (the " + outside + " observed events of the selection lie outside: see the line above)"
            : range != null && where != null ? " (and the selection keeps no observed event at all)" : ""));
      }
      for (String note : notes) {
        o.say("note: %s", note);
      }
      List<String> plots = new ArrayList<>();
      if (png != null || svg != null) {
        var chart = HistogramChart.chart(column + (where == null ? "" : " for " + where), column, edges, n, b, pulls);
        if (png != null) {
          HistogramChart.png(chart, png, 900, 600);
          o.say("saved %s", png);
          plots.add(png.toString());
        }
        if (svg != null) {
          HistogramChart.svg(chart, svg, 900, 600);
          o.say("saved %s", svg);
          plots.add(svg.toString());
        }
      }
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "hist");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("index", index.toString());
      result.put("column", column);
      result.put("where", where);
      result.put("pair", pair);
      result.put("bins", rows);
      result.put("underflow", Map.of("observed", ho.counts()[0], "expected", hr.sumOfWeights()[0]));
      result.put("overflow", Map.of("observed", ho.counts()[bins + 1], "expected", hr.sumOfWeights()[bins + 1]));
      result.put("plots", plots);
      result.put("notes", notes);
      o.result(result);
    }
    return ExitCodes.OK;
  }

  /** A bar of eighth blocks for the observed count, with a │ where the expected yield ends. */
  static String bar(double observed, double expected, int width) {
    StringBuilder b = new StringBuilder();
    String eighths = " ▏▎▍▌▋▊▉";
    int full = (int) observed;
    for (int i = 0; i < full && i < width; i++) {
      b.append('█');
    }
    int rest = (int) Math.round((observed - full) * 8);
    if (full < width && rest > 0) {
      b.append(eighths.charAt(Math.min(rest, 7)));
    }
    int mark = (int) Math.round(expected);
    while (b.length() < Math.min(width + 1, mark + 1)) {
      b.append(' ');
    }
    if (mark <= width) {
      b.setCharAt(Math.min(mark, b.length() - 1), '│');
    }
    return b.toString();
  }
}
