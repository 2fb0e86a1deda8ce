package triage.shell;

import java.nio.file.Path;
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
import triage.core.sample.InputException;
import triage.core.sample.ReadOptions;
import triage.core.sample.Role;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.sample.WeightPolicy;

/** {@code triage followup}: a frozen region on independent data. */
@Command(name = "followup", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Check a frozen region on independent observed and reference samples (streamed from files, no "
        + "index): observed n, expected b with its MC statistical error and each systematic variation, Z_Bi and "
        + "the Asimov significance with the background uncertainty, the one-sided p, the 95%% CL CLs upper limit "
        + "on the signal count, the compatibility with the discovery, and the growth needed for an expected 5σ.",
        "Refuses observed events whose ids appear among the discovery's, unless --allow-overlap."},
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
    @Option(names = "--weight", paramLabel = "COL", description = "Weight column of the reference file.")
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
    SampleSpec follow;
    if (inputs.specFile != null) {
      SampleSpec s = SampleSpec.read(inputs.specFile);
      if (!s.columns().features().equals(region.columns().features())) {
        throw new InputException(inputs.specFile, "its features " + s.columns().features()
            + " differ from the region's " + region.columns().features());
      }
      List<SampleSource> chosen = new java.util.ArrayList<>(s.samples(Role.FOLLOWUP_REFERENCE));
      chosen.addAll(s.samples(Role.FOLLOWUP_OBSERVED));
      if (s.samples(Role.FOLLOWUP_REFERENCE).size() != 1 || s.samples(Role.FOLLOWUP_OBSERVED).size() != 1) {
        throw new InputException(inputs.specFile, "needs exactly one sample with role followup-reference and one "
            + "with role followup-observed (found " + s.samples(Role.FOLLOWUP_REFERENCE).size() + " and "
            + s.samples(Role.FOLLOWUP_OBSERVED).size() + ")");
      }
      follow = new SampleSpec(SampleSpec.FORMAT, s.columns(), s.variations(), chosen);
    } else {
      try {
        follow = new SampleSpec(SampleSpec.FORMAT, region.columns(), region.variations(), List.of(
            new SampleSource("followup-reference", Role.FOLLOWUP_REFERENCE, inputs.files.reference.toString(),
                inputs.files.weight),
            new SampleSource("followup-observed", Role.FOLLOWUP_OBSERVED, inputs.files.observed.toString(),
                null)));
      } catch (IllegalArgumentException e) {
        throw new CommandLine.ParameterException(spec.commandLine(), e.getMessage());
      }
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
    RegionApplier.Yield b = RegionApplier.apply(region, follow, refs.get(0), read);
    Region.Discovery d = region.discovery();
    FollowUp f = FollowUp.compute(n.events(), b.sumOfWeights(), Math.sqrt(b.sumOfSquaredWeights()), b.variations(),
        d.observed(), d.expected(), d.expectedStatError());
    o.say("region '%s' (%s)", region.name(), region.where());
    if (overlap > 0) {
      o.say("WARNING: %d observed ids overlap the discovery sample; --allow-overlap was given", overlap);
    }
    o.say("follow-up  observed %d, expected %.4g ± %.2g (stat.) ± %.2g (syst.) = ± %.2g", f.observed(),
        f.expected(), f.statError(), f.systError(), f.totalError());
    for (var v : f.variations().entrySet()) {
      o.say("  %-16s expected up %.4g, down %.4g", v.getKey(), v.getValue()[0], v.getValue()[1]);
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
    o.say("note: a p-value is not the probability that a signal is real; the discovery significance is biased "
        + "upwards, this one is not (the region was frozen before these data were read). Defer to your "
        + "collaboration's statistical review.");
    Map<String, Object> result = new LinkedHashMap<>();
    result.put("command", "followup");
    result.put("tool", "triage " + ToolVersion.get());
    result.put("region", regionFile.toString());
    result.put("regionSha256", Fingerprints.sha256(regionFile));
    result.put("inputs", List.of(Map.of("file", obs.get(0).file(), "sha256", n.read().sha256(), "rowsRead",
        n.read().rowsRead()), Map.of("file", refs.get(0).file(), "sha256", b.read().sha256(), "rowsRead",
        b.read().rowsRead())));
    result.put("overlappingIds", overlap);
    result.put("overlapAllowed", allowOverlap);
    result.put("result", f);
    result.put("discovery", d);
    result.put("cautions", SelectCommand.CAUTIONS);
    o.result(result);
    return ExitCodes.OK;
  }
}
