package triage.core.calibration;

import com.fasterxml.jackson.annotation.JsonInclude;
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
import java.util.function.ToLongFunction;
import triage.core.sample.InputException;

/**
 * Finished toys as JSON lines: a first line with the settings' fingerprint, then one line per toy, each written
 * and forced to disk as soon as the toy is done, so an interrupted run keeps every finished toy and a rerun skips
 * them. A torn last line (a kill mid-write) is ignored and its toy redone.
 *
 * <p>The same layout carries null toys ({@link Entry}), signal-injection toys ({@link SignalToy}) and clip-tuning
 * toys ({@link ClipTuning.TuningToy}); each kind lives in its own folder, so they never mix.
 */
public final class ToyLog {
  /**
   * One finished null toy.
   *
   * @param toy the toy index
   * @param seed the toy's seed (derived from the run seed and the index)
   * @param events observed events drawn
   * @param t the toy's test statistic
   * @param converged whether the fit met the stopping rule
   * @param iterations iterations of the kept start
   * @param seconds wall time of the toy (drawing and fitting)
   */
  public record Entry(long toy, long seed, int events, double t, boolean converged, int iterations,
      double seconds) {}

  /**
   * One finished toy with an injected signal.
   *
   * @param toy the toy index
   * @param seed the toy's seed
   * @param events observed events in all (background and signal)
   * @param injected of which injected signal events
   * @param t the toy's test statistic
   * @param converged whether the fit met the stopping rule
   * @param iterations iterations of the kept start
   * @param seconds wall time of the toy
   */
  public record SignalToy(long toy, long seed, int events, int injected, double t, boolean converged,
      int iterations, double seconds) {}

  /**
   * The header line.
   *
   * @param format always {@link #FORMAT}
   * @param settings the settings fingerprint every line of the file was made with
   * @param model the model version (null in files written before it was recorded)
   * @param seed the run seed (null in older files)
   * @param kind what the toys are: {@code null}, {@code signal …} or {@code clip-tuning …} (null in older files)
   * @param parts what went into the fingerprint besides the model and seed, part by part, so that a refused merge
   *     can say which differs (null in older files and for toys other than null toys)
   */
  @JsonInclude(JsonInclude.Include.NON_NULL)
  public record Header(String format, String settings, String model, Long seed, String kind,
      java.util.Map<String, String> parts) {
    /** A header without the parts. */
    public Header(String format, String settings, String model, Long seed, String kind) {
      this(format, settings, model, seed, kind, null);
    }

    /** A header with the fingerprint only. */
    public Header(String format, String settings) {
      this(format, settings, null, null, null, null);
    }
  }

  /** JSON without indentation, one object per line. */
  private static final ObjectMapper MAPPER = new ObjectMapper();

  /** The format of toy files. */
  public static final String FORMAT = "triage-toys/2";

  private ToyLog() {
    // no instance
  }

  /**
   * The header of a toy file.
   *
   * @throws InputException when the file is missing, empty or has no toy header
   */
  public static Header header(Path file) throws IOException {
    if (!Files.isRegularFile(file)) {
      throw new InputException(file, "no such toy file");
    }
    String first;
    try (var r = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
      first = r.readLine();
    } catch (java.nio.charset.CharacterCodingException e) {
      throw new InputException(file, 1, 0, "not a toy file (not UTF-8 text; expected a " + FORMAT + " header)", null);
    }
    if (first == null) {
      throw new InputException(file, 1, 0, "empty toy file (expected a " + FORMAT + " header)", null);
    }
    Header h;
    try {
      h = MAPPER.readValue(first, Header.class);
    } catch (IOException e) {
      throw new InputException(file, 1, 0, "not a toy file (expected a " + FORMAT + " header)", e);
    }
    if (!FORMAT.equals(h.format()) || h.settings() == null) {
      throw new InputException(file, 1, 0, "not a toy file (expected format " + FORMAT + ", found "
          + h.format() + ")", null);
    }
    return h;
  }

  /**
   * The null toys already in a file, by toy index (later duplicates win).
   *
   * @param settings the fingerprint the file must carry
   * @throws InputException when the file was made with other settings
   */
  public static TreeMap<Long, Entry> read(Path file, String settings) throws IOException {
    return read(file, settings, Entry.class, Entry::toy);
  }

  /**
   * The lines already in a file, by key (later duplicates win).
   *
   * @param settings the fingerprint the file must carry
   * @param type the record type of a line
   * @param key the key of a line (the toy index)
   * @throws InputException when the file was made with other settings or a line before the last is damaged
   */
  public static <T> TreeMap<Long, T> read(Path file, String settings, Class<T> type, ToLongFunction<T> key)
      throws IOException {
    TreeMap<Long, T> out = new TreeMap<>();
    if (!Files.exists(file)) {
      return out;
    }
    List<String> lines;
    try {
      lines = Files.readAllLines(file, StandardCharsets.UTF_8);
    } catch (java.nio.charset.CharacterCodingException e) {
      throw new InputException(file, 1, 0, "not a toy file (not UTF-8 text; expected a " + FORMAT + " header)", null);
    }
    if (lines.isEmpty()) {
      return out;
    }
    Header h;
    try {
      h = MAPPER.readValue(lines.get(0), Header.class);
    } catch (IOException e) {
      throw new InputException(file, 1, 0, "not a toy file (expected a " + FORMAT + " header)", e);
    }
    if (h.format() != null && h.format().startsWith("triage-toys/") && !FORMAT.equals(h.format())) {
      throw new InputException(file, 1, 0, "written by another triage version (format " + h.format() + ", this one "
          + "writes " + FORMAT + "; since format 2 toys are drawn with inclusion probabilities proportional to "
          + "weight): move the file away to calibrate afresh", null);
    }
    if (!FORMAT.equals(h.format()) || !settings.equals(h.settings())) {
      throw new InputException(file, 1, 0, "made with other settings (fingerprint " + h.settings()
          + ", this run " + settings + "); refusing to mix toys fitted differently", null);
    }
    for (int i = 1; i < lines.size(); i++) {
      try {
        T e = MAPPER.readValue(lines.get(i), type);
        out.put(key.applyAsLong(e), e);
      } catch (IOException e) {
        if (i != lines.size() - 1) {
          throw new InputException(file, i + 1, 0, "damaged toy line", e);
        }
        // A torn last line from an interrupted write: that toy is redone.
      }
    }
    return out;
  }

  /** Appends entries (writing a fingerprint-only header first for a new file) and forces them to disk. */
  public static void append(Path file, String settings, List<?> entries) throws IOException {
    append(file, new Header(FORMAT, settings), entries);
  }

  /** Appends entries (writing the header first for a new file) and forces them to disk. */
  public static void append(Path file, Header header, List<?> entries) throws IOException {
    List<String> lines = new ArrayList<>();
    Files.createDirectories(file.toAbsolutePath().getParent());
    for (Object e : entries) {
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
      if (keep == 0) {
        // A new file, or one whose header line itself was torn: the header comes first.
        lines.add(0, MAPPER.writeValueAsString(header));
      }
      ch.position(keep);
      ch.write(java.nio.ByteBuffer.wrap((String.join("\n", lines) + "\n").getBytes(StandardCharsets.UTF_8)));
      ch.force(true);
    }
  }
}
