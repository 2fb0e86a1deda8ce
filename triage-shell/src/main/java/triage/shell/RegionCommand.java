package triage.shell;

import java.nio.file.Path;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine;
import picocli.CommandLine.Command;
import picocli.CommandLine.Option;
import triage.core.inference.CountingSignificance;
import triage.core.provenance.Fingerprints;
import triage.core.provenance.ToolVersion;
import triage.core.region.IdSet;
import triage.core.region.Region;
import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.EventStore;
import triage.index.Manifest;
import triage.index.SampleSums;
import triage.index.Selection;

/** {@code triage region}: freezes a selection as a region file for the follow-up. */
@Command(name = "region", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Freeze a selection as a signal region file (docs/region.md): the condition, its cuts, the frozen "
        + "model when the condition uses a score, the discovery yields (marked as optimised on the discovery "
        + "data), provenance, and the discovery observed ids for the follow-up's overlap guard."},
    footer = ExitCodes.FOOTER)
public final class RegionCommand implements Callable<Integer> {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  /** The index folder. */
  @Option(names = "--index", required = true, paramLabel = "DIR", description = "The discovery index.")
  Path index;

  /** The condition. */
  @Option(names = "--where", required = true, paramLabel = "CONDITION",
      description = "The region, in SQL WHERE syntax (score:VERSION freezes that model into the file).")
  String where;

  /** Name. */
  @Option(names = "--name", defaultValue = "region", paramLabel = "NAME", description = "A name for people.")
  String name;

  /** Output. */
  @Option(names = "--out", required = true, paramLabel = "FILE", description = "The region file to write.")
  Path out;

  /** JSON output. */
  @Option(names = "--json", description = "Print exactly one JSON object on stdout (fields: docs/json.md).")
  boolean json;

  @Override
  public Integer call() throws Exception {
    Output o = new Output(spec, json);
    Output.prepareFile(out);
    try (EventStore store = EventStore.open(index)) {
      Manifest m = store.manifest();
      Selection selection = store.where(where);
      List<SampleSums> sums = store.sums(selection);
      int obs = Roles.ordinal(m, Role.OBSERVED);
      int ref = Roles.ordinal(m, Role.REFERENCE);
      SampleSums n = sums.get(obs);
      SampleSums b = sums.get(ref);
      if (n.count() == 0 && b.count() == 0) {
        throw new InputException(null, "the condition selects no observed and no reference event: there is no "
            + "region to freeze (check it with triage select --where ...)");
      }
      Map<String, double[]> variations = new LinkedHashMap<>();
      for (int k = 0; k < b.upSums().length; k++) {
        variations.put(m.spec().variations().get(k).name(), new double[] {b.upSums()[k], b.downSums()[k]});
      }
      // the same rules as the check that reads the file back (Region), so a region always reads back
      double z = CountingSignificance.zBiOrNaN(n.count(), b.sumOfWeights(), b.statisticalError());
      double syst2 = triage.core.region.FollowUp.systSquared(b.sumOfWeights(), variations.values());
      Map<String, Long> seeds = new LinkedHashMap<>();
      Region.Model model = null;
      for (Manifest.Model mm : m.models()) {
        if (where.contains("score:" + mm.version()) && !"column".equals(mm.source())) {
          if (model != null) {
            throw new InputException(null, "a region can freeze one model; the condition uses several");
          }
          String text = ModelFiles.json(index, mm);
          model = new Region.Model(mm.version(), Fingerprints.sha256(text.getBytes(
              java.nio.charset.StandardCharsets.UTF_8)), text);
          seeds.put("fitSeed", triage.core.ratio.RatioModel.fromJson(text).training().settings().seed());
        }
      }
      // the cuts and the residual flag as Region derives them when it reads the file back
      var kinds = store.kinds();
      triage.core.select.Plan plan = triage.core.select.Where.plan(triage.core.select.Where.parse(where, kinds), kinds);
      List<Region.Cut> cuts = Region.cutsOf(plan);
      String residual = Region.needsResidual(plan)
          ? "the condition has parts beyond these ranges (categories or other terms): apply 'where' in full"
          : null;
      double[] ids = store.columns(m.sample(m.samples().get(obs).name()).name(),
          List.of(m.spec().columns().id()))[0];
      long[] idValues = new long[ids.length];
      for (int i = 0; i < ids.length; i++) {
        idValues[i] = (long) ids[i];
      }
      List<Region.Input> inputs = new ArrayList<>();
      for (Manifest.Sample s : m.samples()) {
        var source = m.spec().sample(s.name());
        inputs.add(new Region.Input(s.name(), s.role().label(), s.file(), s.sha256(),
            source == null ? null : source.weight()));
      }
      Region region = new Region(Region.FORMAT, name, where, cuts, residual, m.spec().columns(),
          m.spec().variations(), m.spec().scales(), model,
          new Region.Discovery(n.count(), b.sumOfWeights(), b.statisticalError(), Math.sqrt(syst2), variations, z,
              true),
          new Region.Provenance("triage " + ToolVersion.get(), Instant.now().truncatedTo(ChronoUnit.SECONDS)
              .toString(), m.indexId(), inputs, seeds), IdSet.of(idValues), SelectCommand.CAUTIONS);
      region.write(out);
      o.say("region '%s' frozen in %s: discovery observed %d, expected %.4g ± %.2g (stat.) ± %.2g (syst.), local "
          + "Z_Bi = %.2f (optimised on these data: biased upwards)", name, out, n.count(), b.sumOfWeights(),
          b.statisticalError(), Math.sqrt(syst2), z);
      o.say("%d discovery observed ids recorded for the overlap guard%s", idValues.length,
          model == null ? "" : "; model " + model.version() + " frozen into the file");
      o.say("next: triage followup --region %s --spec <independent samples>", out);
      Map<String, Object> result = new LinkedHashMap<>();
      result.put("command", "region");
      result.put("tool", "triage " + ToolVersion.get());
      result.put("file", out.toString());
      result.put("sha256", Fingerprints.sha256(out));
      result.put("discovery", region.discovery());
      result.put("cuts", cuts);
      result.put("model", model == null ? null : model.version());
      o.result(result);
    }
    return ExitCodes.OK;
  }

}
