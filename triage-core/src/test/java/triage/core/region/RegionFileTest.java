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
}
