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
    Region ext = new Region(example.format(), example.name(), "score:external >= 0.5", java.util.List.of(
        new Region.Cut("score:external", 0.5, null)), example.residual(), withScore, example.variations(),
        example.scales(), null, example.discovery(), example.provenance(), example.discoveryIds(),
        example.cautions());
    assertEquals("score:external", ext.cuts().get(0).column());
    assertThrows(IllegalArgumentException.class, () -> new Region(example.format(), example.name(),
        "score:external >= 0.5", java.util.List.of(new Region.Cut("score:external", 0.5, null)), example.residual(),
        c, example.variations(), example.scales(), null, example.discovery(), example.provenance(),
        example.discoveryIds(), example.cautions()));

    // a score region: the model must match its SHA-256 and read the region's features
    Region r = Region.read(EXAMPLE);
    triage.core.ratio.TrainingData data = triage.core.ratio.TrainingData.of(java.util.List.of("m"),
        new double[] {0.1, 0.5, 0.9, 0.3}, new double[] {1, 1, 1, 1}, new double[] {0.8, 0.7});
    String json = triage.core.ratio.RatioTrainer.fit(data, triage.core.ratio.FitSettings.defaults()
        .withHiddenWidths(java.util.List.of(2)).withThreads(1)
        .withStoppingRule(triage.core.ratio.StoppingRule.defaults().withMaxIterations(2))).model().toJson();
    String sha = triage.core.provenance.Fingerprints.sha256(json.getBytes(java.nio.charset.StandardCharsets.UTF_8));
    Region scored = new Region(r.format(), r.name(), r.where(), r.cuts(), r.residual(), r.columns(), r.variations(),
        r.scales(), new Region.Model("m1", sha, json), r.discovery(), r.provenance(), r.discoveryIds(), r.cautions());
    scored.write(f);
    assertEquals(sha, Region.read(f).model().sha256());
    Files.writeString(f, Files.readString(f).replace(sha, "0".repeat(64)));
    assertTrue(assertThrows(InputException.class, () -> Region.read(f)).getMessage().contains("SHA-256"));
    String renamed = json.replaceFirst("\"featureNames\"\\s*:\\s*\\[\\s*\"m\"", "\"featureNames\":[\"zzz\"");
    assertTrue(!renamed.equals(json), "the model document lists its feature names");
    String sha2 = triage.core.provenance.Fingerprints.sha256(renamed.getBytes(
        java.nio.charset.StandardCharsets.UTF_8));
    assertTrue(assertThrows(IllegalArgumentException.class, () -> new Region(r.format(), r.name(), r.where(),
        r.cuts(), r.residual(), r.columns(), r.variations(), r.scales(), new Region.Model("m1", sha2, renamed),
        r.discovery(), r.provenance(), r.discoveryIds(), r.cautions())).getMessage().contains("'zzz'"));
  }

  /** The 1-based line and column of the first occurrence of a piece of the example's text. */
  private static long[] placeOf(String text, String piece) {
    int at = text.indexOf(piece);
    assertTrue(at >= 0, piece);
    String before = text.substring(0, at);
    return new long[] {before.lines().count() + (before.endsWith("\n") ? 1 : 0),
        at - before.lastIndexOf('\n')};
  }

  private InputException refused(Path f, String text) throws Exception {
    Files.writeString(f, text);
    return assertThrows(InputException.class, () -> Region.read(f));
  }

  /**
   * Each refusal names the field and the line and column where it is in the file (not the end of the file), and
   * no JSON library internals; a missing field has no place.
   */
  @Test
  void refusalsNameTheFieldAndItsPlace() throws Exception {
    Path f = dir.resolve("bad.json");
    String text = Files.readString(EXAMPLE);
    InputException e = refused(f, text.replace("\"hi\" : null", "\"hi\" : 0.1"));
    assertTrue(e.getMessage().contains("field 'cuts[0].lo'") && e.getMessage().contains("above hi"), e.getMessage());
    assertArrayEquals(placeOf(text, "\"lo\""), new long[] {e.line(), e.column()}, e.getMessage());
    e = refused(f, text.replace("\"column\" : \"m\"", "\"column\" : \"mm\""));
    assertTrue(e.getMessage().contains("field 'cuts[0].column': cut on 'mm'"), e.getMessage());
    assertArrayEquals(placeOf(text, "\"column\" : \"m\""), new long[] {e.line(), e.column()}, e.getMessage());
    e = refused(f, text.replace("\"where\" : \"m > 0.5 AND", "\"where\" : \"m > AND"));
    assertTrue(e.getMessage().startsWith(f + ":4:3: not a valid region file: field 'where': "), e.getMessage());
    assertTrue(!e.getMessage().contains("selection:") && e.getMessage().contains("at position 5"), e.getMessage());
    e = refused(f, text.replace("\"observed\" : 7,", "\"observed\" : \"seven\","));
    assertTrue(e.getMessage().contains("field 'discovery.observed': expected a whole number"), e.getMessage());
    assertArrayEquals(placeOf(text, "\"observed\" : 7"), new long[] {e.line(), e.column()}, e.getMessage());
    e = refused(f, "{\"format\": \"triage-region/1\",\n  \"cuts\": [ }");
    assertEquals(2, e.line(), e.getMessage());
    assertEquals(13, e.column(), e.getMessage());
    for (String internal : new String[] {"Source", "REDACTED", "StreamReadFeature", "`", "java."}) {
      assertTrue(!e.getMessage().contains(internal), e.getMessage());
    }
    assertTrue(e.getMessage().contains("(for Array starting at line 2, column 11)"), e.getMessage());
    e = refused(f, text.replace("\"name\" : \"example\",", ""));
    assertTrue(e.getMessage().startsWith(f + ": not a valid region file: field 'name': missing"), e.getMessage());
  }

  /**
   * The cuts must be the box that 'where' compiles to (the example: m &gt; 0.5 gives lo = the double after 0.5 and
   * no upper bound), and 'residual' must be there when the box is not the whole condition.
   */
  @Test
  void cutsThatContradictTheConditionAreRefused() throws Exception {
    Path f = dir.resolve("edited.json");
    String text = Files.readString(EXAMPLE);
    InputException e = refused(f, text.replace("\"lo\" : 0.5000000000000001", "\"lo\" : 0.2"));
    assertTrue(e.getMessage().contains("field 'cuts[0]': the cuts do not match 'where'"), e.getMessage());
    assertTrue(e.getMessage().contains("whose box is 0.5000000000000001 ≤ m but the file has 0.2 ≤ m"),
        e.getMessage());
    assertArrayEquals(placeOf(text, "{\n    \"column\""), new long[] {e.line(), e.column()}, e.getMessage());
    e = refused(f, text.replace("\"hi\" : null", "\"hi\" : 9"));
    assertTrue(e.getMessage().contains("do not match 'where'"), e.getMessage());
    e = refused(f, text.replace("\"where\" : \"m > 0.5", "\"where\" : \"m > 0.6"));
    assertTrue(e.getMessage().contains("do not match 'where'"), e.getMessage());
    e = refused(f, text.replaceFirst("(?s)\"cuts\" : \\[.*?\\],\n  ", ""));
    assertTrue(e.getMessage().contains("field 'cuts': missing"), e.getMessage());
    e = refused(f, text.replace("\"cuts\" : [ {", "\"cuts\" : [ {\"column\" : \"m\", \"lo\" : 1, \"hi\" : 2}, {"));
    assertTrue(e.getMessage().contains("field 'cuts[0]'"), e.getMessage());
    e = refused(f, text.replaceFirst("\"residual\" : \"[^\"]*\",\n  ", ""));
    assertTrue(e.getMessage().contains("field 'residual': missing, but 'where'"), e.getMessage());
  }

  /**
   * Discovery yields edited by hand: n_d above the number of discovery ids, or one yield changed alone, so that
   * the local Z_Bi (from n_d, b_d, σ_stat) or σ_syst (from the variations) no longer follows (example: n_d = 7,
   * b_d = 6.08715, 40 ids).
   */
  @Test
  void discoveryYieldsThatDoNotAddUpAreRefused() throws Exception {
    Path f = dir.resolve("edited.json");
    String text = Files.readString(EXAMPLE);
    InputException e = refused(f, text.replace("\"observed\" : 7,", "\"observed\" : 12,"));
    assertTrue(e.getMessage().contains("field 'discovery.localZBi'"), e.getMessage());
    assertArrayEquals(placeOf(text, "\"localZBi\""), new long[] {e.line(), e.column()}, e.getMessage());
    e = refused(f, text.replace("\"observed\" : 7,", "\"observed\" : 41,"));
    assertTrue(e.getMessage().contains("field 'discovery.observed': n_d = 41 cannot be"), e.getMessage());
    e = refused(f, text.replace("\"expected\" : 6.08715,", "\"expected\" : 5.0,"));
    assertTrue(e.getMessage().contains("field 'discovery.expectedSystError'"), e.getMessage());
    e = refused(f, text.replace("\"scale\" : [ 6.20882, 5.96539 ]", "\"scale\" : [ 7.20882, 5.96539 ]"));
    assertTrue(e.getMessage().contains("field 'discovery.expectedSystError'"), e.getMessage());
    e = refused(f, text.replace("\"scale\" : [ 6.20882", "\"other\" : [ 6.20882"));
    assertTrue(e.getMessage().contains("field 'discovery.variations'"), e.getMessage());
  }

  /** The scale systematics and the reference's weight column travel with the region and are checked. */
  @Test
  void scalesAndTheReferenceWeightColumnRoundTrip() throws Exception {
    Region r = Region.read(EXAMPLE);
    assertEquals(java.util.List.of(new triage.core.sample.ScaleShift("m_scale", java.util.List.of("m"), 0.01)),
        r.scales());
    assertEquals("w", r.provenance().inputs().get(0).weight());
    assertEquals(null, r.provenance().inputs().get(1).weight());
    Path f = dir.resolve("copy.json");
    r.write(f);
    assertTrue(!Files.readString(f).contains("\"weight\" : null"), "an unweighted input leaves 'weight' out");
    assertEquals(r.scales(), Region.read(f).scales());
    Region.FieldException bad = assertThrows(Region.FieldException.class, () -> new Region(r.format(), r.name(),
        r.where(), r.cuts(), r.residual(), r.columns(), r.variations(), java.util.List.of(
        new triage.core.sample.ScaleShift("e_scale", java.util.List.of("pt"), 0.02)), r.model(), r.discovery(),
        r.provenance(), r.discoveryIds(), r.cautions()));
    assertEquals("/scales/0", bad.pointer());
    assertTrue(bad.getMessage().contains("'pt'"), bad.getMessage());
  }
}
