package triage.shell.bench;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;
import java.util.concurrent.Callable;
import java.util.stream.Stream;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.sample.SampleSpec;
import triage.index.EventStore;
import triage.index.Histogram;
import triage.index.Ingest;
import triage.index.IngestReport;
import triage.index.SampleSums;
import triage.index.Selection;
import triage.shell.ExitCodes;
import triage.shell.Output;
import triage.shell.VersionProvider;

/** {@code triage bench}: benchmarks that print figures. */
@Command(name = "bench", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = "Benchmarks on generated data; they print figures (run them on a quiet machine).",
    subcommands = {BenchCommand.IngestBench.class, BenchCommand.SelectBench.class, BenchCommand.FitBench.class,
        BenchCommand.CalibrateBench.class}, footer = ExitCodes.FOOTER)
public final class BenchCommand implements Runnable {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  @Override
  public void run() {
    spec.commandLine().usage(spec.commandLine().getOut());
  }

  /** Options shared by the benchmarks. */
  static class Common {
    /** Events. */
    @Option(names = "--events", defaultValue = "1000000", paramLabel = "N",
        description = "Events in all (default: ${DEFAULT-VALUE}); accepts 1e7.")
    String events;

    /** Features. */
    @Option(names = "--features", defaultValue = "10", paramLabel = "K",
        description = "Feature columns (default: ${DEFAULT-VALUE}).")
    int features;

    /** Work folder. */
    @Option(names = "--work", paramLabel = "DIR",
        description = "Folder for the generated files and index (default: a temporary folder, removed after).")
    Path work;

    /** Seed. */
    @Option(names = "--seed", defaultValue = "1", paramLabel = "N", description = "Seed (default: ${DEFAULT-VALUE}).")
    long seed;

    long eventCount() {
      return (long) Double.parseDouble(events);
    }

    /** The work folder: the one given, or a new temporary one. */
    Path folder() throws IOException {
      return work != null ? work : Files.createTempDirectory("triage-bench");
    }

    /** Removes the folder when it was temporary. */
    void cleanUp(Path folder) throws IOException {
      if (work == null) {
        deleteTree(folder);
      }
    }
  }

  /** {@code triage bench ingest}. */
  @Command(name = "ingest", mixinStandardHelpOptions = true,
      description = "Ingest speed (events/s) and peak heap on generated CSV data.")
  static final class IngestBench extends Common implements Callable<Integer> {
    /** Filled by picocli. */
    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    /** Threads. */
    @Option(names = "--threads", defaultValue = "2", paramLabel = "N",
        description = "Indexing threads (default: ${DEFAULT-VALUE}).")
    int threads;

    /** Lucene's RAM buffer. */
    @Option(names = "--ram-buffer-mb", defaultValue = "256", paramLabel = "MB",
        description = "Lucene's in-memory buffer before a segment is written (default: ${DEFAULT-VALUE}).")
    double ramBufferMb;

    /** Runs. */
    @Option(names = "--runs", defaultValue = "3", paramLabel = "N",
        description = "Ingests of the same files in one JVM (default: ${DEFAULT-VALUE}): the first is cold, as one "
            + "`triage ingest` runs; the later ones are warm, their median printed too.")
    int runs;

    @Override
    public Integer call() throws Exception {
      Output o = new Output(spec, false);
      if (runs < 1) {
        throw new CommandLine.ParameterException(spec.commandLine(), "--runs must be at least 1, got " + runs);
      }
      Path folder = folder();
      try {
        long n = eventCount();
        o.say("generating %d events with %d features in %s ...", n, features, folder);
        long t0 = System.nanoTime();
        SampleSpec s = BenchData.write(folder.resolve("data"), n, features, seed);
        o.say("  generated in %.1f s (%.0f MB of CSV)", (System.nanoTime() - t0) / 1e9,
            (Files.size(folder.resolve("data/reference.csv")) + Files.size(folder.resolve("data/observed.csv"))) / 1e6);
        // the first run is cold, as one `triage ingest` in a fresh JVM; later runs see compiled code, as a benchmark
        // harness measures after its warm-up iterations; both are printed
        double[] warmRates = new double[Math.max(0, runs - 1)];
        for (int run = 1; run <= runs; run++) {
          System.gc();
          try (HeapSampler heap = new HeapSampler()) {
            double cpu0 = HeapSampler.processCpuSeconds();
            double jit0 = compilationSeconds();
            IngestReport r = Ingest.run(s, folder.resolve("index"), Ingest.Options.defaults().withReplace(true)
                .withThreads(threads).withRamBufferMb(ramBufferMb), line -> { });
            double cpu = HeapSampler.processCpuSeconds() - cpu0;
            double jit = compilationSeconds() - jit0;
            double rate = r.rowsIndexed() / r.seconds();
            if (run > 1) {
              warmRates[run - 2] = rate;
            }
            o.say("run %d of %d (%s):", run, runs, run == 1 ? "cold JVM" : "warm");
            o.say("  ingest: %d events in %.2f s = %.0f events/s (%d indexing threads, %d cores, max heap %d MiB)",
                r.rowsIndexed(), r.seconds(), rate, threads,
                Runtime.getRuntime().availableProcessors(), Runtime.getRuntime().maxMemory() >> 20);
            o.say("  process CPU time during ingest: %.2f s = %.2f µs per event (%.0f events per CPU second; "
                + "steadier than wall time on a shared machine)", cpu, cpu * 1e6 / r.rowsIndexed(),
                r.rowsIndexed() / cpu);
            if (jit0 >= 0) {
              // the JVM's compilers run beside the ingest and their time is part of the CPU time above; it weighs
              // most on small inputs, before the code is compiled
              o.say("  JIT compilation during ingest: %.2f s (the JVM's own figure, included in the CPU time above)",
                  jit);
            }
            o.say("  peak heap in use during ingest: %.0f MiB", heap.peakMiB());
          }
        }
        if (warmRates.length > 0) {
          Arrays.sort(warmRates);
          int k = warmRates.length;
          double median = k % 2 == 1 ? warmRates[k / 2] : (warmRates[k / 2 - 1] + warmRates[k / 2]) / 2;
          o.say("warm %s: median %.0f events/s (min %.0f, max %.0f); the cold run is what a single "
              + "`triage ingest` of this size sees", runs == 2 ? "run (2)" : "runs (2-" + runs + ")", median,
              warmRates[0], warmRates[k - 1]);
        }
      } finally {
        cleanUp(folder);
      }
      return ExitCodes.OK;
    }
  }

  /** Seconds the JVM's JIT compilers have spent so far, or −1 where the JVM does not say. */
  static double compilationSeconds() {
    java.lang.management.CompilationMXBean c = java.lang.management.ManagementFactory.getCompilationMXBean();
    return c != null && c.isCompilationTimeMonitoringSupported() ? c.getTotalCompilationTime() / 1e3 : -1;
  }

  /** {@code triage bench select}. */
  @Command(name = "select", mixinStandardHelpOptions = true,
      description = "Box selection (about 1%% of events) plus count and a 100-bin histogram, a 20-step threshold "
          + "scan, and the ranking of every feature with 1,000 permutations inside a 1%% box: median and p95 ms.")
  static final class SelectBench extends Common implements Callable<Integer> {
    /** Filled by picocli. */
    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    /** Repetitions. */
    @Option(names = "--repeat", defaultValue = "40", paramLabel = "N",
        description = "Timed repetitions (default: ${DEFAULT-VALUE}), after 5 warm-up runs.")
    int repeat;

    @Override
    public Integer call() throws Exception {
      Output o = new Output(spec, false);
      Path folder = folder();
      try {
        Path index = folder.resolve("index");
        if (!Files.exists(index.resolve("manifest.json"))) {
          long n = eventCount();
          o.say("generating and ingesting %d events with %d features in %s ...", n, features, folder);
          SampleSpec s = BenchData.write(folder.resolve("data"), n, features, seed);
          System.gc();
          try (HeapSampler heap = new HeapSampler()) {
            double cpu0 = HeapSampler.processCpuSeconds();
            IngestReport r = Ingest.run(s, index, Ingest.Options.defaults().withReplace(true), line -> { });
            double cpu = HeapSampler.processCpuSeconds() - cpu0;
            o.say("ingest: %d events in %.1f s = %.0f events/s (CPU %.2f µs per event); peak heap in use %.0f MiB "
                + "(max heap %d MiB)", r.rowsIndexed(), r.seconds(), r.rowsIndexed() / r.seconds(),
                cpu * 1e6 / r.rowsIndexed(), heap.peakMiB(), Runtime.getRuntime().maxMemory() >> 20);
          }
        }
        try (EventStore store = EventStore.open(index)) {
          long total = store.manifest().totalEvents();
          double[] ms = new double[repeat];
          long selected = 0;
          for (int i = -5; i < repeat; i++) {
            // A box of about 10% × 10% = 1% of the events, moved each time so no result is simply reused.
            double a = 0.05 + 0.01 * Math.floorMod(i, 40);
            double b = 0.45 - 0.005 * Math.floorMod(i, 30);
            Selection box = Selection.all().and(new Selection.Range("x0", a, a + 0.1))
                .and(new Selection.Range("x1", b, b + 0.1));
            long t0 = System.nanoTime();
            List<SampleSums> sums = store.sums(box);
            List<Histogram> h = store.histogram(box, "x2", 100, 0, 1);
            double elapsed = (System.nanoTime() - t0) / 1e6;
            long count = sums.stream().mapToLong(SampleSums::count).sum();
            if (count != h.stream().mapToLong(Histogram::total).sum()) {
              throw new IllegalStateException("histogram and count disagree");
            }
            if (i >= 0) {
              ms[i] = elapsed;
              selected += count;
            }
          }
          Arrays.sort(ms);
          o.say("select: %d events in the index; box on 2 of %d features selects %.2f%% on average", total,
              store.manifest().spec().columns().features().size(), 100.0 * selected / repeat / total);
          o.say("box selection + per-sample count and Σw, Σw² + 100-bin histogram: median %.1f ms, p95 %.1f ms, "
              + "min %.1f ms (%d runs)", ms[repeat / 2], ms[(int) Math.ceil(0.95 * repeat) - 1], ms[0], repeat);
          // A threshold scan as 'triage scan' does it on a score: x2 > c for 20 thresholds at the observed quantiles,
          // reading the column and the weights and one pass of buckets.
          double[] scan = new double[repeat];
          for (int i = -5; i < repeat; i++) {
            long t0 = System.nanoTime();
            double[] ob = store.rows("observed", List.of("x2"), Selection.all()).columns()[0];
            EventStore.SelectedRows rr = store.rows("reference", List.of("x2"), Selection.all());
            triage.core.region.ThresholdScan.Row[] rows = triage.core.region.ThresholdScan.scan(ob,
                rr.columns()[0], rr.weights(), 20);
            if (i >= 0) {
              scan[i] = (System.nanoTime() - t0) / 1e6;
            }
            if (rows[0].observed() < 0) {
              throw new IllegalStateException("negative count");
            }
          }
          Arrays.sort(scan);
          o.say("threshold scan, 20 thresholds (column read + one pass): median %.1f ms, p95 %.1f ms (%d runs)",
              scan[repeat / 2], scan[(int) Math.ceil(0.95 * repeat) - 1], repeat);
          rank(o, store);
        }
      } finally {
        cleanUp(folder);
      }
      return ExitCodes.OK;
    }
  }

  /** Permutations of the ranking benchmark. */
  static final int RANK_PERMUTATIONS = 1000;

  /**
   * Ranking inside a 1% box: every feature of the selected observed events against the reference inside the box,
   * with {@link #RANK_PERMUTATIONS} permutations (what 'triage rank' does for its comparison inside a selection),
   * columns fetched from the index included. Three timed runs after one warm-up.
   */
  private static void rank(Output o, EventStore store) throws IOException {
    List<String> names = store.manifest().spec().columns().features();
    Selection box = Selection.all().and(new Selection.Range("x0", 0.3, 0.4)).and(new Selection.Range("x1", 0.3,
        0.4));
    double[] ms = new double[3];
    int nObs = 0;
    int nRef = 0;
    for (int i = -1; i < ms.length; i++) {
      long t0 = System.nanoTime();
      double[][] obs = store.rows("observed", names, box).columns();
      EventStore.SelectedRows r = store.rows("reference", names, box);
      double[][] ref = r.columns();
      double[] w = r.weights();
      List<triage.core.ranking.FeatureRanking.Row> rows = triage.core.ranking.FeatureRanking.rank(names, obs, ref,
          w, RANK_PERMUTATIONS, 1);
      if (i >= 0) {
        ms[i] = (System.nanoTime() - t0) / 1e6;
      }
      nObs = obs[0].length;
      nRef = ref[0].length;
      if (rows.size() != names.size()) {
        throw new IllegalStateException("ranking lost a feature");
      }
    }
    Arrays.sort(ms);
    o.say("ranking %d features, %d permutations, %d observed against %d reference events in the box: median %.0f "
        + "ms, max %.0f ms (3 runs)", names.size(), RANK_PERMUTATIONS, nObs, nRef, ms[1], ms[2]);
    long t0 = System.nanoTime();
    double[][] obs = store.rows("observed", names, box).columns();
    EventStore.SelectedRows r = store.rows("reference", names, box);
    double[][] ref = r.columns();
    double[] w = r.weights();
    long t1 = System.nanoTime();
    triage.core.ranking.FeatureRanking.rank(names, obs, ref, w, 0, 1);
    long t2 = System.nanoTime();
    o.say("  of which: reading the columns %.0f ms, the measures without permutations %.0f ms", (t1 - t0) / 1e6,
        (t2 - t1) / 1e6);
  }

  /** A usage error unless {@code clip} is finite and at least {@link triage.core.ratio.FitSettings#MIN_CLIP}. */
  static void checkClip(CommandLine cl, double clip) {
    if (!(clip >= triage.core.ratio.FitSettings.MIN_CLIP) || !Double.isFinite(clip)) {
      throw new CommandLine.ParameterException(cl, "--clip must be finite and at least "
          + triage.core.ratio.FitSettings.MIN_CLIP + ", found " + clip);
    }
  }

  /** Threads and sample sizes of the fit and calibration benchmarks. */
  static final class FitSizes {
    /** Threads. */
    @Option(names = "--threads", defaultValue = "2", paramLabel = "N",
        description = "Threads (default: ${DEFAULT-VALUE}).")
    int threads;

    /** Reference events. */
    @Option(names = "--reference", defaultValue = "200000", paramLabel = "N",
        description = "Reference events (default: ${DEFAULT-VALUE}).")
    int reference;

    /** Observed events (expected per toy in a calibration). */
    @Option(names = "--observed", defaultValue = "2000", paramLabel = "N",
        description = "Observed events, or expected per toy (default: ${DEFAULT-VALUE}).")
    int observed;
  }

  /** {@code triage bench fit}. */
  @Command(name = "fit", mixinStandardHelpOptions = true,
      description = {"Ratio-model fits on generated 1D, 2D and 5D data (d-5-5-1 sigmoid, clip 9 or --clip): seconds per fit "
          + "to the stopping rule, loss evaluations, t, events·parameters per second per evaluation against the "
          + "machine's measured arithmetic limit, and Adam at a fixed epoch count."})
  static final class FitBench implements Callable<Integer> {
    /** Command spec, for usage errors. */
    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    /** Threads and sample sizes. */
    @CommandLine.Mixin
    FitSizes sizes;

    /** Adam epochs. */
    @Option(names = "--epochs", defaultValue = "2000", paramLabel = "N",
        description = "Adam epochs (default: ${DEFAULT-VALUE}).")
    int epochs;

    /** Iteration cap. */
    @Option(names = "--max-iterations", defaultValue = "5000", paramLabel = "N",
        description = "L-BFGS iteration cap (default: ${DEFAULT-VALUE}).")
    int maxIterations;

    /** Starts. */
    @Option(names = "--starts", defaultValue = "4", paramLabel = "N",
        description = "Random starts of the extra multi-start fit (default: ${DEFAULT-VALUE}; 1 skips it); "
            + "each start's seconds and t are printed with their spread, since one seed's fit is one draw.")
    int starts;

    /** Clip. */
    @Option(names = "--clip", defaultValue = "9", paramLabel = "C",
        description = "Weight clip of every fit (default: ${DEFAULT-VALUE}; `calibrate --tune-clip` chose 2 on the 5D "
            + "problem, see DEVELOPERS.md).")
    double clip;

    /** Cases. */
    @Option(names = "--cases", defaultValue = "1D,2D,5D", split = ",", paramLabel = "CASE",
        description = "Cases to run, of 1D, 2D, 5D (default: ${DEFAULT-VALUE}).")
    java.util.List<String> cases;

    /** Export folder. */
    @Option(names = "--export", paramLabel = "DIR",
        description = "Also write each case's training problem and the L-BFGS trajectory to DIR, for the same fit "
            + "run side by side in a general deep-learning framework (bench/framework/fit_torch.py).")
    Path export;

    @Override
    public Integer call() {
      java.util.Set<String> known = java.util.Set.of("1D", "2D", "5D");
      for (String c : cases) {
        if (!known.contains(c)) {
          throw new CommandLine.ParameterException(spec.commandLine(), "--cases: unknown case '" + c
              + "' (expected 1D, 2D or 5D)");
        }
      }
      checkClip(spec.commandLine(), clip);
      java.io.PrintWriter out = spec.commandLine().getOut();
      triage.core.ratio.FitBenchmark.run(out, sizes.threads, sizes.reference, sizes.observed, epochs,
          maxIterations, starts, export, clip, java.util.Set.copyOf(cases));
      out.flush();
      return ExitCodes.OK;
    }
  }

  /** {@code triage bench calibrate}. */
  @Command(name = "calibrate", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
      description = {"Null toys of a calibration (5D by default; weighted N(0, I) reference, d-5-5-1 sigmoid, "
          + "clip 9 or --clip, the default stopping rule): seconds, iterations and t per toy, and the wall time "
          + "that projects for 1,000 toys."})
  static final class CalibrateBench implements Callable<Integer> {
    /** Threads and sample sizes. */
    @CommandLine.Mixin
    FitSizes sizes;

    /** Features. */
    @Option(names = "--features", defaultValue = "5", paramLabel = "D",
        description = "Features (default: ${DEFAULT-VALUE}).")
    int features;

    /** Toys. */
    @Option(names = "--toys", defaultValue = "5", paramLabel = "N", description = "Toys (default: ${DEFAULT-VALUE}).")
    int toys;

    /** Clip. */
    @Option(names = "--clip", defaultValue = "9", paramLabel = "C",
        description = "Weight clip of the toy fits (default: ${DEFAULT-VALUE}, as `fit`).")
    double clip;

    /** Optimiser of the toy fits. */
    @Option(names = "--optimiser", defaultValue = "lbfgs", paramLabel = "lbfgs|profiled",
        description = "Optimiser of the toy fits, as `fit --optimiser` (default: ${DEFAULT-VALUE}, as `fit`).")
    String optimiser;

    @Override
    public Integer call() throws IOException {
      checkClip(new CommandLine(this), clip);
      triage.core.ratio.OptimiserKind kind = switch (optimiser) {
        case "profiled" -> triage.core.ratio.OptimiserKind.PROFILED_LBFGS;
        case "lbfgs" -> triage.core.ratio.OptimiserKind.PROJECTED_LBFGS;
        default -> throw new CommandLine.ParameterException(new CommandLine(this),
            "--optimiser must be profiled or lbfgs, not '" + optimiser + "'");
      };
      triage.core.calibration.CalibrationBenchmark.run(System.out, sizes.threads, sizes.reference, sizes.observed,
          features, toys, clip, kind);
      return ExitCodes.OK;
    }
  }

  static void deleteTree(Path root) throws IOException {
    if (!Files.exists(root)) {
      return;
    }
    try (Stream<Path> paths = Files.walk(root)) {
      for (Path p : paths.sorted(Comparator.reverseOrder()).toList()) {
        Files.deleteIfExists(p);
      }
    }
  }
}
