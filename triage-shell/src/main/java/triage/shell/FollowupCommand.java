package triage.shell;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.ArgGroup;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.provenance.Fingerprints;
import triage.core.provenance.ToolVersion;
import triage.core.region.FollowUp;
import triage.core.region.Region;
import triage.core.region.RegionApplier;
import triage.core.region.Stress;
import triage.core.sample.EventFileReader;
import triage.core.sample.InputException;
import triage.core.sample.ReadOptions;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.ScaleShift;
import triage.core.sample.WeightPolicy;
import triage.core.select.Where;

/** {@code triage followup}: a frozen region on independent data. */
@Command(name = "followup", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Check a frozen region on independent observed and reference samples (streamed from files, no "
        + "index): observed n, expected b with its MC statistical error and each systematic variation, Z_Bi and "
        + "the Asimov significance with the background uncertainty, the one-sided p, the 95%% CL CLs upper limit "
        + "on the signal count, the compatibility with the discovery, and the growth needed for an expected 5σ.",
        "Refuses observed events whose ids appear among the discovery's, unless --allow-overlap; warns when an input "
            + "is a discovery input file (the same SHA-256). The systematic error includes the weight variations "
            + "and the scale shifts the region records (features scaled by 1 ± δ, re-scored by the frozen model)."},
    footer = ExitCodes.FOOTER, sortOptions = false)
public final class FollowupCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** Region file. */
  @Option(names = "--region", required = true, paramLabel = "FILE", description = "The region file.")
  Path regionFile;

  /** Inputs. */
  @ArgGroup(exclusive = true, multiplicity = "1", heading = "%nInputs (a spec, or two files):%n")
  Inputs inputs;

  /** Inputs. */
  static final class Inputs {
    /** Spec. */
    @Option(names = "--spec", paramLabel = "FILE",
        description = "Sample spec naming followup-observed and followup-reference files.")
    Path specFile;

    /** Files. */
    @ArgGroup(exclusive = false)
    Files files;
  }

  /** Two files with the region's columns. */
  static final class Files {
    /** Reference. */
    @Option(names = "--reference", required = true, paramLabel = "FILE", description = "Independent reference.")
    Path reference;

    /** Observed. */
    @Option(names = "--observed", required = true, paramLabel = "FILE", description = "Independent observed.")
    Path observed;

    /** Weight column. */
    @Option(names = "--weight", paramLabel = "COL", description = "Weight column of the reference file (default: "
        + "the discovery reference's weight column, as the region file records it).")
    String weight;
  }

  /** Override. */
  @Option(names = "--allow-overlap",
      description = "Run even if observed ids overlap the discovery sample (recorded in the output).")
  boolean allowOverlap;

  /** Negative weights. */
  @Option(names = "--allow-negative-weights",
      description = "Accept zero and negative reference weights (as ingest does with the same option).")
  boolean allowNegativeWeights;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Region region = Region.read(regionFile);
    List<String> cautions = new ArrayList<>(SelectCommand.CAUTIONS);
    String discoveryWeight = Region.discoveryReferenceWeight(region);
    boolean discoveryWeighted = discoveryWeight != null || Region.weightedYields(region.discovery());
    SampleSpec follow;
    List<ScaleShift> scales;
    String weightNote = null;
    if (inputs.specFile != null) {
      SampleSpec s = SampleSpec.read(inputs.specFile);
      if (!s.columns().features().equals(region.columns().features())) {
        throw new InputException(inputs.specFile, "its features " + s.columns().features()
            + " differ from the region's " + region.columns().features());
      }
      List<SampleSource> chosen = new ArrayList<>(s.samples(Role.FOLLOWUP_REFERENCE));
      chosen.addAll(s.samples(Role.FOLLOWUP_OBSERVED));
      if (s.samples(Role.FOLLOWUP_REFERENCE).size() != 1 || s.samples(Role.FOLLOWUP_OBSERVED).size() != 1) {
        throw new InputException(inputs.specFile, "needs exactly one sample with role followup-reference and one "
            + "with role followup-observed (found " + s.samples(Role.FOLLOWUP_REFERENCE).size() + " and "
            + s.samples(Role.FOLLOWUP_OBSERVED).size() + ")");
      }
      if (discoveryWeighted && s.samples(Role.FOLLOWUP_REFERENCE).get(0).weight() == null) {
        throw new InputException(inputs.specFile, "its followup-reference sample has no 'weight', but the region "
            + regionFile + " was frozen from a weighted reference" + (discoveryWeight == null ? ""
            : " (weight column '" + discoveryWeight + "')") + ": name the follow-up reference's weight column; read "
            + "unweighted, its event count would be compared with weighted yields and variations");
      }
      follow = new SampleSpec(SampleSpec.FORMAT, s.columns(), s.variations(), s.scales(), chosen);
      scales = s.scales();
    } else {
      String weight = inputs.files.weight;
      if (weight == null && discoveryWeighted) {
        if (discoveryWeight == null) {
          throw new InputException(regionFile, "the region was frozen from a weighted reference (its discovery "
              + "yield " + region.discovery().expected() + " has an MC error of "
              + region.discovery().expectedStatError() + ", not its square root as for events of weight one), and "
              + "the file does not record the weight column: give the follow-up reference's weight column with "
              + "--weight COL");
        }
        if (!EventFileReader.header(inputs.files.reference).contains(discoveryWeight)) {
          throw new InputException(inputs.files.reference, 1, 0, "has no column '" + discoveryWeight + "', the "
              + "weight column of the discovery reference the region " + regionFile + " was frozen from: give this "
              + "file's weight column with --weight COL (read unweighted, its event count would be compared with "
              + "weighted yields and variations)", null);
        }
        weight = discoveryWeight;
        weightNote = "reference weights from column '" + weight + "', the discovery reference's weight column "
            + "(recorded in the region file; --weight chooses another)";
      } else if (weight == null && region.scales() == null && region.discovery().expected() == 0) {
        // a region file written before the weight column was recorded, with nothing expected in the discovery: its
        // yields cannot tell whether that reference was weighted
        weightNote = "the region file does not say whether the discovery reference was weighted (it was written "
            + "before the weight column was recorded, and nothing was expected in the discovery): the follow-up "
            + "reference is read unweighted; give --weight COL if its events carry weights";
      }
      try {
        follow = new SampleSpec(SampleSpec.FORMAT, region.columns(), region.variations(), List.of(
            new SampleSource("followup-reference", Role.FOLLOWUP_REFERENCE, inputs.files.reference.toString(),
                weight),
            new SampleSource("followup-observed", Role.FOLLOWUP_OBSERVED, inputs.files.observed.toString(),
                null)));
      } catch (IllegalArgumentException e) {
        throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
      }
      scales = region.scales() == null ? List.of() : region.scales();
    }
    List<SampleSource> refs = follow.samples(Role.FOLLOWUP_REFERENCE);
    List<SampleSource> obs = follow.samples(Role.FOLLOWUP_OBSERVED);
    if (refs.size() != 1 || obs.size() != 1) {
      throw new InputException(inputs.specFile, "needs exactly one followup-reference and one followup-observed "
          + "sample (found " + refs.size() + " and " + obs.size() + ")");
    }
    // followup has no --on-bad-row: the first bad row stops it, and the message must not suggest skipping
    ReadOptions read = (allowNegativeWeights ? ReadOptions.strict().with(WeightPolicy.ANY_FINITE)
        : ReadOptions.strict()).withoutSkipSuggestion();
    o.note("reading %s", obs.get(0).file());
    RegionApplier.Yield n = RegionApplier.apply(region, follow, obs.get(0), read);
    long overlap = region.discoveryIds().overlap(n.ids());
    if (overlap > 0 && !allowOverlap) {
      throw new InputException(obs.get(0).path(), overlap + " of its " + n.ids().length + " event ids also belong to "
          + "the discovery sample the region was found on; the follow-up must use independent data "
          + "(use --allow-overlap to run anyway; it is recorded in the output)");
    }
    o.note("reading %s", refs.get(0).file());
    RegionApplier.Yield b = RegionApplier.apply(region, follow, refs.get(0), read, scales);
    List<Map<String, Object>> reused = new ArrayList<>();
    reused(region, obs.get(0), n, reused);
    reused(region, refs.get(0), b, reused);
    List<String> notIncluded = null;
    if (region.scales() != null) {
      notIncluded = new ArrayList<>();
      for (ScaleShift shift : region.scales()) {
        if (!b.scales().containsKey(shift.name())) {
          notIncluded.add(shift.name());
        }
      }
    }
    Region.Discovery d = region.discovery();
    FollowUp f = FollowUp.compute(n.events(), b.sumOfWeights(), Math.sqrt(b.sumOfSquaredWeights()), b.variations(),
        b.scales(), d.observed(), d.expected(), d.expectedStatError());
    o.say("region '%s' (%s)", region.name(), region.where());
    if (weightNote != null) {
      o.say("note: %s", weightNote);
      cautions.add("In the follow-up, " + weightNote + ".");
    }
    if (overlap > 0) {
      o.say("WARNING: %d observed ids overlap the discovery sample; --allow-overlap was given", overlap);
    }
    for (Map<String, Object> r : reused) {
      String caution = r.get("file") + " is the discovery's " + r.get("discoveryRole") + " file (the same SHA-256)"
          + (Role.FOLLOWUP_REFERENCE.label().equals(r.get("role")) ? ": the expected yield and its MC statistical "
          + "error are not independent of the discovery, whose region was chosen where this reference may "
          + "fluctuate low; use a separately simulated reference" : ": the follow-up reuses the discovery events");
      o.say("WARNING: %s", caution);
      cautions.add(caution + ".");
    }
    o.say("follow-up  observed %d, expected %.4g ± %.2g (stat.) ± %.2g (syst.) = ± %.2g", f.observed(),
        f.expected(), f.statError(), f.systError(), f.totalError());
    for (var v : f.variations().entrySet()) {
      o.say("  %-16s expected up %.4g, down %.4g", v.getKey(), v.getValue()[0], v.getValue()[1]);
    }
    for (ScaleShift shift : scales) {
      double[] v = f.scales().get(shift.name());
      o.say("  %-16s expected up %.4g, down %.4g (scale: %s × (1 ± %.3g))", shift.name(), v[0], v[1],
          String.join(", ", shift.features()), shift.relative());
    }
    if (!scales.isEmpty() && usesExternalScore(region)) {
      String caution = "the external score column is held fixed under the scale shifts (it cannot be recomputed)";
      o.say("note: %s", caution);
      cautions.add("In the follow-up, " + caution + ".");
    }
    if (notIncluded == null) {
      String caution = "the region file does not record the discovery's scale systematics (it was written before "
          + "they were recorded): " + (scales.isEmpty() ? "any the discovery spec declared are not included in the "
          + "systematic error" : "the follow-up spec's (" + String.join(", ", scales.stream().map(ScaleShift::name)
          .toList()) + ") are included; any other the discovery spec declared is not");
      o.say("caution: %s", caution);
      cautions.add("In the follow-up, " + caution + ".");
    } else if (!notIncluded.isEmpty()) {
      String caution = "the discovery's scale systematics " + String.join(", ", notIncluded) + " are not included "
          + "in the systematic error (the follow-up spec does not declare them)";
      o.say("caution: %s", caution);
      cautions.add("In the follow-up, " + caution + ".");
    }
    if (f.expected() > 0) {
      o.say("significance  Z_Bi = %.2f (one-sided p %s); Asimov Z with σ_b at s = n − b: %.2f", f.zBi(),
          Output.pEquals(f.pBi()), f.zAsimov());
    } else {
      o.say("significance  none: the follow-up reference has no events in the region (expected 0), so the %d "
          + "observed events have no background estimate to be compared with (a larger reference sample would "
          + "give one)", f.observed());
    }
    if (Double.isNaN(f.clsUpperLimit95())) {
      o.say("upper limit   not computed (no background estimate)");
    } else {
      o.say("upper limit   s < %.3g at 95%% CL (CLs)", f.clsUpperLimit95());
    }
    o.say("discovery     n = %d, b = %.4g (local Z_Bi %.2f, optimised on those data); predicted follow-up "
        + "excess %.3g; compatibility z = %.2f", d.observed(), d.expected(), d.localZBi(), f.predictedSignal(),
        f.compatibilityZ());
    if (f.growthFor5Sigma() == 1) {
      o.say("sensitivity   at its present size the follow-up sample gives an expected 5σ or more for the "
          + "predicted excess (which carries the discovery's upward bias)");
    } else if (Double.isFinite(f.growthFor5Sigma())) {
      o.say("sensitivity   the follow-up sample would have to grow by %.3g× for an expected 5σ for the predicted "
          + "excess (which carries the discovery's upward bias)", f.growthFor5Sigma());
    }
    boolean independent = overlap == 0 && reused.isEmpty();
    if (independent) {
      o.say("note: a p-value is not the probability that a signal is real; the discovery significance is biased "
          + "upwards, this one is not (the region was frozen before these data were read). Defer to your "
          + "collaboration's statistical review.");
    } else {
      List<String> why = new ArrayList<>();
      if (overlap > 0) {
        why.add(overlap + " observed events of the discovery sample");
      }
      for (Map<String, Object> r : reused) {
        why.add("the discovery's " + r.get("discoveryRole") + " file");
      }
      String caution = "This follow-up reuses discovery data (" + String.join("; ", why) + "): it is not "
          + "independent of the discovery, and its significance is biased upwards like the discovery's.";
      o.say("note: a p-value is not the probability that a signal is real; %s%s Defer to your collaboration's "
          + "statistical review.", Character.toLowerCase(caution.charAt(0)), caution.substring(1));
      cautions.add(caution);
    }
    Map<String, Object> result = new LinkedHashMap<>();
    result.put("command", "followup");
    result.put("tool", "triage " + ToolVersion.get());
    result.put("region", regionFile.toString());
    result.put("regionSha256", Fingerprints.sha256(regionFile));
    result.put("inputs", List.of(Map.of("file", obs.get(0).file(), "sha256", n.read().sha256(), "rowsRead",
        n.read().rowsRead()), Map.of("file", refs.get(0).file(), "sha256", b.read().sha256(), "rowsRead",
        b.read().rowsRead())));
    result.put("referenceWeight", refs.get(0).weight());
    result.put("overlappingIds", overlap);
    result.put("overlapAllowed", allowOverlap);
    result.put("reusedDiscoveryInputs", reused);
    result.put("independent", independent);
    result.put("scales", scales);
    result.put("scalesNotIncluded", notIncluded);
    result.put("result", f);
    result.put("discovery", d);
    result.put("cautions", cautions);
    o.result(result);
    return ExitCodes.OK;
  }

  /** Adds the follow-up input to {@code out} when its SHA-256 is that of a discovery input (reference, observed). */
  private static void reused(Region region, SampleSource source, RegionApplier.Yield yield,
      List<Map<String, Object>> out) {
    if (region.provenance() == null || region.provenance().inputs() == null) {
      return;
    }
    for (Region.Input in : region.provenance().inputs()) {
      boolean discovery = in != null && (Role.REFERENCE.label().equals(in.role())
          || Role.OBSERVED.label().equals(in.role()));
      if (discovery && yield.read().sha256().equals(in.sha256())) {
        Map<String, Object> r = new LinkedHashMap<>();
        r.put("file", source.file());
        r.put("role", source.role().label());
        r.put("discoverySample", in.sample());
        r.put("discoveryRole", in.role());
        r.put("discoveryFile", in.file());
        out.add(r);
        return;
      }
    }
  }

  /** Whether the region's condition reads the external score column (held fixed under scale shifts). */
  private static boolean usesExternalScore(Region region) {
    String score = region.columns().score();
    if (score == null) {
      return false;
    }
    Map<String, Where.Kind> kinds = RegionApplier.kinds(region);
    List<String> used = Stress.columnsOf(Where.parse(region.where(), kinds), kinds);
    return used.contains(score) || used.contains("score:external");
  }
}
