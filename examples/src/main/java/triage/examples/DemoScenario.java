package triage.examples;

import java.io.BufferedWriter;
import java.io.IOException;
import java.io.OutputStream;
import java.io.OutputStreamWriter;
import java.io.Writer;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.zip.GZIPOutputStream;
import triage.core.sample.Columns;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.Variation;

/**
 * The demo scenario: photon-plus-jet events at the fictional Corvid Ring, a proton collider, seen by its (equally
 * fictional) Wren detector, whose barrel calorimeter has 16 azimuthal sectors.
 *
 * <p>Background: the photon–jet mass follows a falling exponential above 200 GeV with slope 100 GeV; the
 * reference is generated from a flatter law (slope 200 GeV) and weighted back by the density ratio, as when
 * simulation is produced in slices, so its weights are positive and non-uniform. Transverse momenta follow the
 * mass, the jet recoils against the photon in azimuth, missing momentum is exponential, the jet count is
 * 1 + Poisson(0.8). Two systematics (photon and jet energy scale) come as up/down weight columns.
 *
 * <p>The observed sample holds a Poisson number of background events, plus (a) a narrow resonance in the
 * photon–jet mass and (b) a calorimeter noise burst: extra events in a few runs, with the photon in one sector and
 * large missing momentum. The follow-up observed sample keeps (a) and loses (b) (the sector was repaired).
 * Everything is drawn from one seed; {@code truth.csv} names the injected events.
 */
public final class DemoScenario {
  /** Feature columns, in order. */
  public static final List<String> FEATURES = List.of("m_gj", "pt_g", "pt_j", "eta_g", "eta_j", "phi_g", "phi_j",
      "met", "n_jets");

  /** The invented resonance mass, GeV. */
  public static final double RESONANCE_MASS = 750;

  /** The resonance's observed width (resolution), GeV. */
  public static final double RESONANCE_WIDTH = 18;

  /** The sector of the noise burst. */
  public static final int NOISY_SECTOR = 11;

  /** The runs of the noise burst. */
  public static final List<Long> NOISY_RUNS = List.of(4117L, 4118L, 4131L);

  /**
   * Sizes and seed.
   *
   * @param seed the seed of every draw
   * @param referenceEvents events in each reference sample
   * @param expectedBackground expected background events in each observed sample
   * @param signalEvents expected resonance events in each observed sample
   * @param artefactEvents expected noise-burst events in the discovery observed sample
   */
  public record Settings(long seed, int referenceEvents, double expectedBackground, double signalEvents,
      double artefactEvents) {
    /** Checks sizes. */
    public Settings {
      if (referenceEvents < 1 || !(expectedBackground > 0) || signalEvents < 0 || artefactEvents < 0) {
        throw new IllegalArgumentException("sizes must be positive (signal and artefact may be zero)");
      }
    }

    /** The full demo: 200,000 reference events, about 20,000 observed; the resonance's ideal Z is 4.7. */
    public static Settings standard() {
      return new Settings(20261202L, 200_000, 20_000, 38, 150);
    }

    /** A small version for quick runs and tests; the resonance's ideal Z is 4.9. */
    public static Settings small() {
      return new Settings(20261202L, 20_000, 2_000, 15, 30);
    }
  }

  /**
   * The resonance's ideal significance: the median discovery significance of the Neyman–Pearson test built from
   * the true densities, {@code Z = sqrt(2 ∫ [(s + b) ln(1 + s/b) − s] dm)} with s(m) and b(m) the expected signal
   * and background densities in the photon–jet mass (the Asimov form of the extended likelihood ratio over a
   * spectrum; Eur. Phys. J. C 71 (2011) 1554, Eq. 97, integrated over
   * the mass). The other features' distributions given the mass are the same for the resonance and the
   * background here, so the mass carries the whole likelihood ratio. The noise burst is not counted: it is
   * the artefact, not the signal.
   */
  public static double idealSignificance(Settings s) {
    double lo = RESONANCE_MASS - 10 * RESONANCE_WIDTH;
    double hi = RESONANCE_MASS + 10 * RESONANCE_WIDTH;
    int steps = 20_000;
    double h = (hi - lo) / steps;
    double sum = 0;
    for (int k = 0; k <= steps; k++) {
      double m = lo + k * h;
      double b = m < 200 ? 0 : s.expectedBackground() / 100 * Math.exp(-(m - 200) / 100);
      double z = (m - RESONANCE_MASS) / RESONANCE_WIDTH;
      double sig = s.signalEvents() * Math.exp(-0.5 * z * z) / (RESONANCE_WIDTH * Math.sqrt(2 * Math.PI));
      double f = b > 0 ? (sig + b) * Math.log1p(sig / b) - sig : 0;
      sum += f * (k == 0 || k == steps ? 1 : k % 2 == 1 ? 4 : 2);
    }
    return Math.sqrt(2 * sum * h / 3);
  }

  /** Where the scenario was written. */
  public record Written(Path folder, Path spec, Path truth, SampleSpec sampleSpec) {}

  private DemoScenario() {
    // no instance
  }

  /** The sample spec of the scenario, with file names relative to its folder. */
  public static SampleSpec spec() {
    Columns columns = new Columns(FEATURES, "event", "run", "lumi_block", List.of("sector"), null);
    List<Variation> variations = List.of(new Variation("photon_scale", "w_pes_up", "w_pes_down"),
        new Variation("jet_scale", "w_jes_up", "w_jes_down"));
    List<SampleSource> samples = List.of(
        new SampleSource("reference", Role.REFERENCE, "reference.csv.gz", "weight"),
        new SampleSource("observed", Role.OBSERVED, "observed.csv.gz", null),
        new SampleSource("followup-reference", Role.FOLLOWUP_REFERENCE, "followup-reference.csv.gz", "weight"),
        new SampleSource("followup-observed", Role.FOLLOWUP_OBSERVED, "followup-observed.csv.gz", null));
    // The calorimeter's energy scale, known to 1.5%: it moves the photon and jet momenta and their mass together.
    List<triage.core.sample.ScaleShift> scales = List.of(new triage.core.sample.ScaleShift("calo_energy_scale",
        List.of("m_gj", "pt_g", "pt_j"), 0.015));
    return new SampleSpec(SampleSpec.FORMAT, columns, variations, scales, samples);
  }

  /** Writes the four samples, {@code spec.json} and {@code truth.csv} into a folder. */
  public static Written write(Path folder, Settings settings) throws IOException {
    Files.createDirectories(folder);
    SplittableRandom root = new SplittableRandom(settings.seed());
    SplittableRandom refRandom = root.split();
    SplittableRandom obsRandom = root.split();
    SplittableRandom followRefRandom = root.split();
    SplittableRandom followObsRandom = root.split();
    Path truth = folder.resolve("truth.csv");
    try (Writer t = writer(truth, false)) {
      t.write("sample,event,origin\n");
      writeReference(folder.resolve("reference.csv.gz"), refRandom, settings, 1_000_000L);
      writeObserved(folder.resolve("observed.csv.gz"), obsRandom, settings, true, 5_000_000L, "observed", t);
      writeReference(folder.resolve("followup-reference.csv.gz"), followRefRandom, settings, 11_000_000L);
      writeObserved(folder.resolve("followup-observed.csv.gz"), followObsRandom, settings, false, 15_000_000L,
          "followup-observed", t);
    }
    Path spec = folder.resolve("spec.json");
    Files.writeString(spec, spec().toJson() + "\n");
    return new Written(folder, spec, truth, SampleSpec.read(spec));
  }

  private static Writer writer(Path file, boolean gzip) throws IOException {
    OutputStream out = Files.newOutputStream(file);
    if (gzip) {
      out = new GZIPOutputStream(out, 1 << 16);
    }
    return new BufferedWriter(new OutputStreamWriter(out, StandardCharsets.UTF_8), 1 << 16);
  }

  private static final String HEADER = "event,run,lumi_block,sector," + String.join(",", FEATURES);

  /** One background event's features, drawn from the true background density (or the flatter one). */
  private static void background(SplittableRandom r, double massSlope, double[] x) {
    double m = 200 + r.nextExponential() * massSlope;
    kinematics(r, m, x);
  }

  /** Fills features given the photon–jet mass. */
  private static void kinematics(SplittableRandom r, double m, double[] x) {
    double share = 0.5 + 0.08 * r.nextGaussian();
    double ptG = Math.max(25, m * 0.45 * (0.75 + 0.25 * r.nextDouble()) * share * 2 * 0.55);
    double ptJ = Math.max(30, ptG * (1 + 0.12 * r.nextGaussian()));
    double etaG = clamp(1.1 * r.nextGaussian(), -2.4, 2.4);
    double etaJ = clamp(etaG * 0.3 + 1.2 * r.nextGaussian(), -2.8, 2.8);
    double phiG = -Math.PI + 2 * Math.PI * r.nextDouble();
    double phiJ = wrap(phiG + Math.PI + 0.25 * r.nextGaussian());
    double met = 8 * r.nextExponential() + 2 * r.nextDouble();
    int nJets = 1 + poisson(r, 0.8);
    x[0] = m;
    x[1] = ptG;
    x[2] = ptJ;
    x[3] = etaG;
    x[4] = etaJ;
    x[5] = phiG;
    x[6] = phiJ;
    x[7] = met;
    x[8] = nJets;
  }

  private static double clamp(double v, double lo, double hi) {
    return Math.max(lo, Math.min(hi, v));
  }

  private static double wrap(double phi) {
    double p = phi;
    while (p > Math.PI) {
      p -= 2 * Math.PI;
    }
    while (p <= -Math.PI) {
      p += 2 * Math.PI;
    }
    return p;
  }

  /** Poisson by counting unit-rate exponential gaps: exact, and fast enough for the means used here (O(mean)). */
  static int poisson(SplittableRandom r, double mean) {
    int n = 0;
    double t = r.nextExponential();
    while (t < mean) {
      n++;
      t += r.nextExponential();
    }
    return n;
  }

  private static int sectorOf(double phi) {
    int s = (int) Math.floor((phi + Math.PI) / (2 * Math.PI) * 16);
    return Math.min(15, Math.max(0, s));
  }

  private static void writeReference(Path file, SplittableRandom r, Settings s, long firstId) throws IOException {
    double[] x = new double[FEATURES.size()];
    double[] w = new double[s.referenceEvents()];
    List<double[]> rows = new ArrayList<>();
    double sum = 0;
    for (int i = 0; i < s.referenceEvents(); i++) {
      background(r, 200, x);
      // Weight back from the flatter generation law (slope 200) to the true one (slope 100).
      double m = x[0];
      w[i] = 2 * Math.exp(-(m - 200) / 200);
      sum += w[i];
      rows.add(x.clone());
    }
    double norm = s.expectedBackground() / sum;
    try (Writer out = writer(file, true)) {
      out.write(HEADER + ",weight,w_pes_up,w_pes_down,w_jes_up,w_jes_down\n");
      StringBuilder line = new StringBuilder(256);
      for (int i = 0; i < rows.size(); i++) {
        double[] e = rows.get(i);
        double weight = w[i] * norm;
        double pes = 0.01 + 0.02 * Math.min(1, e[1] / 400);
        double jes = 0.015 + 0.03 * Math.min(1, e[2] / 400) + 0.01 * (e[8] - 1);
        line.setLength(0);
        line.append(firstId + i).append(',').append(run(r)).append(',').append(1 + r.nextInt(400)).append(',')
            .append(sectorOf(e[5]));
        appendFeatures(line, e);
        line.append(',').append(fmtWeight(weight)).append(',').append(fmtWeight(weight * (1 + pes))).append(',')
            .append(fmtWeight(weight * (1 - pes))).append(',').append(fmtWeight(weight * (1 + jes))).append(',')
            .append(fmtWeight(weight * (1 - jes))).append('\n');
        out.write(line.toString());
      }
    }
  }

  private static long run(SplittableRandom r) {
    return 4100 + r.nextInt(40);
  }

  private static void appendFeatures(StringBuilder line, double[] e) {
    for (int k = 0; k < e.length; k++) {
      line.append(',');
      if (k == e.length - 1) {
        line.append((long) e[k]);
      } else {
        line.append(fmt(e[k]));
      }
    }
  }

  /** Four decimals: enough for the demo's kinematics, and fast to write. */
  private static String fmt(double v) {
    return Double.toString(Math.round(v * 1e4) / 1e4);
  }

  /** Weights keep full precision (they are small numbers whose sums are checked). */
  private static String fmtWeight(double v) {
    return Double.toString(v);
  }

  private static void writeObserved(Path file, SplittableRandom r, Settings s, boolean withArtefact, long firstId,
      String sample, Writer truth) throws IOException {
    int nBackground = poisson(r, s.expectedBackground());
    int nSignal = poisson(r, s.signalEvents());
    int nArtefact = withArtefact ? poisson(r, s.artefactEvents()) : 0;
    int total = nBackground + nSignal + nArtefact;
    // Shuffle origins so injected events are not grouped by id.
    int[] origin = new int[total];
    for (int i = 0; i < total; i++) {
      origin[i] = i < nBackground ? 0 : i < nBackground + nSignal ? 1 : 2;
    }
    for (int i = total - 1; i > 0; i--) {
      int j = r.nextInt(i + 1);
      int t = origin[i];
      origin[i] = origin[j];
      origin[j] = t;
    }
    double[] x = new double[FEATURES.size()];
    try (Writer out = writer(file, true)) {
      out.write(HEADER + "\n");
      StringBuilder line = new StringBuilder(256);
      for (int i = 0; i < total; i++) {
        long run = run(r);
        if (origin[i] == 0) {
          background(r, 100, x);
        } else if (origin[i] == 1) {
          kinematics(r, RESONANCE_MASS + RESONANCE_WIDTH * r.nextGaussian(), x);
          truth.write(sample + "," + (firstId + i) + ",resonance\n");
        } else {
          background(r, 100, x);
          // The photon sits in the noisy sector and the fake energy shows up as missing momentum.
          x[5] = -Math.PI + (NOISY_SECTOR + r.nextDouble()) * 2 * Math.PI / 16;
          x[7] = 60 + 40 * r.nextExponential();
          run = NOISY_RUNS.get(r.nextInt(NOISY_RUNS.size()));
          truth.write(sample + "," + (firstId + i) + ",noise-burst\n");
        }
        line.setLength(0);
        line.append(firstId + i).append(',').append(run).append(',').append(1 + r.nextInt(400)).append(',')
            .append(sectorOf(x[5]));
        appendFeatures(line, x);
        line.append('\n');
        out.write(line.toString());
      }
    }
  }
}
