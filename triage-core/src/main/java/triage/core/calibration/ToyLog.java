package triage.core.calibration;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.ArrayList;
import java.util.List;
import java.util.TreeMap;
import triage.core.sample.InputException;

/**
 * Finished toys as JSON lines: a first line with the settings' fingerprint, then one line per toy, each written
 * and forced to disk as soon as the toy is done, so an interrupted run keeps every finished toy and a rerun skips
 * them. A torn last line (a kill mid-write) is ignored and its toy redone.
 */
public final class ToyLog {
  /** One finished toy. */
  public record Entry(long toy, long seed, int events, double t, boolean converged, int iterations,
      double seconds) {}

  /** The header line. */
  public record Header(String format, String settings) {}

  /** JSON without indentation, one object per line. */
  private static final ObjectMapper MAPPER = new ObjectMapper();

  /** The format of toy files. */
  public static final String FORMAT = "triage-toys/1";

  private ToyLog() {
    // no instance
  }

  /**
   * The toys already in a file, by toy index (later duplicates win).
   *
   * @param settings the fingerprint the file must carry
   * @throws InputException when the file was made with other settings
   */
  public static TreeMap<Long, Entry> read(Path file, String settings) throws IOException {
    TreeMap<Long, Entry> out = new TreeMap<>();
    if (!Files.exists(file)) {
      return out;
    }
    List<String> lines = Files.readAllLines(file, StandardCharsets.UTF_8);
    if (lines.isEmpty()) {
      return out;
    }
    Header h;
    try {
      h = MAPPER.readValue(lines.get(0), Header.class);
    } catch (IOException e) {
      throw new InputException(file, 1, 0, "not a toy file (expected a " + FORMAT + " header)", e);
    }
    if (!FORMAT.equals(h.format()) || !settings.equals(h.settings())) {
      throw new InputException(file, 1, 0, "made with other settings (fingerprint " + h.settings()
          + ", this run " + settings + "); refusing to mix toys fitted differently", null);
    }
    for (int i = 1; i < lines.size(); i++) {
      try {
        Entry e = MAPPER.readValue(lines.get(i), Entry.class);
        out.put(e.toy(), e);
      } catch (IOException e) {
        if (i != lines.size() - 1) {
          throw new InputException(file, i + 1, 0, "damaged toy line", e);
        }
        // A torn last line from an interrupted write: that toy is redone.
      }
    }
    return out;
  }

  /** Appends entries (writing the header first for a new file) and forces them to disk. */
  public static void append(Path file, String settings, List<Entry> entries) throws IOException {
    List<String> lines = new ArrayList<>();
    if (!Files.exists(file) || Files.size(file) == 0) {
      Files.createDirectories(file.toAbsolutePath().getParent());
      lines.add(MAPPER.writeValueAsString(new Header(FORMAT, settings)));
    }
    for (Entry e : entries) {
      lines.add(MAPPER.writeValueAsString(e));
    }
    try (FileChannel ch = FileChannel.open(file, StandardOpenOption.CREATE, StandardOpenOption.WRITE,
        StandardOpenOption.READ)) {
      // Drop a torn last line left by an interrupted write, then append after the last complete line.
      long size = ch.size();
      long keep = size;
      if (size > 0) {
        java.nio.ByteBuffer one = java.nio.ByteBuffer.allocate(1);
        while (keep > 0) {
          one.clear();
          ch.read(one, keep - 1);
          if (one.get(0) == '\n') {
            break;
          }
          keep--;
        }
        ch.truncate(keep);
      }
      ch.position(keep);
      ch.write(java.nio.ByteBuffer.wrap((String.join("\n", lines) + "\n").getBytes(StandardCharsets.UTF_8)));
      ch.force(true);
    }
  }
}
