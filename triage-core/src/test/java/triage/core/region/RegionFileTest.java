package triage.core.region;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.core.sample.InputException;

/** The documented example region file validates, and region files round-trip. */
class RegionFileTest {
  /** The example in the repository's docs (the module's folder is the working directory of the tests). */
  static final Path EXAMPLE = Path.of("..", "docs", "region-example.json");

  @TempDir
  Path dir;

  @Test
  void documentedExampleValidatesAndRoundTrips() throws Exception {
    Region r = Region.read(EXAMPLE);
    assertEquals(Region.FORMAT, r.format());
    assertTrue(r.discovery().optimisedOnDiscoveryData());
    assertEquals(r.discoveryIds().count(), r.discoveryIds().ids().length);
    Path copy = dir.resolve("copy.json");
    r.write(copy);
    Region again = Region.read(copy);
    assertEquals(r.where(), again.where());
    assertEquals(r.cuts(), again.cuts());
    assertEquals(r.discoveryIds(), again.discoveryIds());
    assertArrayEquals(r.discovery().variations().get("scale"), again.discovery().variations().get("scale"));
    assertEquals(Files.readString(copy), Files.readString(dir.resolve("copy.json")));
  }

  @Test
  void badFilesAreRefusedWithTheirPlace() throws Exception {
    Path f = dir.resolve("bad.json");
    Files.writeString(f, Files.readString(EXAMPLE).replace("triage-region/1", "triage-region/7"));
    InputException e = assertThrows(InputException.class, () -> Region.read(f));
    assertTrue(e.getMessage().contains("'triage-region/7' is not known"), e.getMessage());
    Files.writeString(f, "{\"format\": ");
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("bad.json:1:"));
    String text = Files.readString(EXAMPLE);
    String tampered = text.replaceFirst("\"sha256\" : \"[0-9a-f]{64}\"(\\s*,\\s*\"data\")", "\"sha256\" : \"00\"$1");
    Files.writeString(f, tampered);
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("fingerprint"));
  }

  /** A region file edited after freezing is refused: name, cuts, id count and the frozen model are checked. */
  @Test
  void editedRegionFilesAreRefused() throws Exception {
    Path f = dir.resolve("edited.json");
    String text = Files.readString(EXAMPLE);
    Files.writeString(f, text.replace("\"name\" : \"example\",", ""));
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("'name'"));
    Files.writeString(f, text.replace("\"count\" : 40,", "\"count\" : 5,"));
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("says 5 ids"));
    Files.writeString(f, text.replace("\"hi\" : null", "\"hi\" : 0.1"));
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("above hi"));
    // a cut on the external score column, under its model name, is known when the columns name a score column
    Region example = Region.read(EXAMPLE);
    triage.core.sample.Columns c = example.columns();
    triage.core.sample.Columns withScore = new triage.core.sample.Columns(c.features(), c.id(), c.run(), c.block(),
        c.categories(), "s");
    Region ext = new Region(example.format(), example.name(), "score:external > 0.5", java.util.List.of(
        new Region.Cut("score:external", 0.5, null)), example.residual(), withScore, example.variations(), null,
        example.discovery(), example.provenance(), example.discoveryIds(), example.cautions());
    assertEquals("score:external", ext.cuts().get(0).column());
    assertThrows(IllegalArgumentException.class, () -> new Region(example.format(), example.name(),
        "score:external > 0.5", java.util.List.of(new Region.Cut("score:external", 0.5, null)), example.residual(),
        c, example.variations(), null, example.discovery(), example.provenance(), example.discoveryIds(),
        example.cautions()));

    // a score region: the model must match its SHA-256 and read the region's features
    Region r = Region.read(EXAMPLE);
    triage.core.ratio.TrainingData data = triage.core.ratio.TrainingData.of(java.util.List.of("m"),
        new double[] {0.1, 0.5, 0.9, 0.3}, new double[] {1, 1, 1, 1}, new double[] {0.8, 0.7});
    String json = triage.core.ratio.RatioTrainer.fit(data, triage.core.ratio.FitSettings.defaults()
        .withHiddenWidths(java.util.List.of(2)).withThreads(1)
        .withStoppingRule(triage.core.ratio.StoppingRule.defaults().withMaxIterations(2))).model().toJson();
    String sha = triage.core.provenance.Fingerprints.sha256(json.getBytes(java.nio.charset.StandardCharsets.UTF_8));
    Region scored = new Region(r.format(), r.name(), r.where(), r.cuts(), r.residual(), r.columns(), r.variations(),
        new Region.Model("m1", sha, json), r.discovery(), r.provenance(), r.discoveryIds(), r.cautions());
    scored.write(f);
    assertEquals(sha, Region.read(f).model().sha256());
    Files.writeString(f, Files.readString(f).replace(sha, "0".repeat(64)));
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("SHA-256"));
    String renamed = json.replaceFirst("\"featureNames\"\\s*:\\s*\\[\\s*\"m\"", "\"featureNames\":[\"zzz\"");
    assertTrue(!renamed.equals(json), "the model document lists its feature names");
    String sha2 = triage.core.provenance.Fingerprints.sha256(renamed.getBytes(
        java.nio.charset.StandardCharsets.UTF_8));
    assertTrue(assertThrows(IllegalArgumentException.class, () -> new Region(r.format(), r.name(), r.where(),
        r.cuts(), r.residual(), r.columns(), r.variations(), new Region.Model("m1", sha2, renamed), r.discovery(),
        r.provenance(), r.discoveryIds(), r.cautions())).getMessage().contains("'zzz'"));
  }
}
