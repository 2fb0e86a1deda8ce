package triage.core.calibration;

import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.util.List;
import triage.core.sample.InputException;

/**
 * The clip chosen by clip tuning, kept beside the toys so that {@code fit --clip tuned} can use it. It names the
 * network it was tuned for: a clip means nothing for another architecture, activation or loss.
 *
 * @param format always {@link #FORMAT}
 * @param clip the chosen clip C
 * @param hiddenWidths the hidden-layer widths it was tuned for
 * @param activation the activation it was tuned for
 * @param loss the loss it was tuned for
 * @param model the model version whose settings the tuning toys used
 * @param seed the run seed of the tuning
 * @param toysPerClip toys per clip
 * @param clips the clip grid
 * @param caps the iteration caps
 * @param tolerance the plateau tolerance τ
 * @param parameters the parameter count k of χ²(k)
 * @param ksDistance the chosen clip's KS distance to χ²(k)
 * @param rule the rule, in words
 */
public record TunedClip(String format, double clip, List<Integer> hiddenWidths, String activation, String loss,
    String model, long seed, int toysPerClip, double[] clips, int[] caps, double tolerance, int parameters,
    double ksDistance, String rule) {

  /** The format name. */
  public static final String FORMAT = "triage-tuned-clip/1";

  /** Pretty JSON. */
  private static final ObjectMapper MAPPER = new ObjectMapper().enable(SerializationFeature.INDENT_OUTPUT);

  /** Checks the format and the clip. */
  public TunedClip {
    if (!FORMAT.equals(format)) {
      throw new IllegalArgumentException("tuned-clip format must be " + FORMAT + ", found " + format);
    }
    if (!(clip > 0) || !Double.isFinite(clip)) {
      throw new IllegalArgumentException("tuned clip " + clip + " must be finite and positive");
    }
    hiddenWidths = List.copyOf(hiddenWidths);
  }

  /** Writes the file atomically (temporary file, then a move). */
  public void write(Path file) throws IOException {
    Files.createDirectories(file.toAbsolutePath().getParent());
    Path tmp = file.resolveSibling(file.getFileName() + ".tmp");
    Files.writeString(tmp, MAPPER.writeValueAsString(this) + "\n", StandardCharsets.UTF_8);
    Files.move(tmp, file, StandardCopyOption.REPLACE_EXISTING, StandardCopyOption.ATOMIC_MOVE);
  }

  /**
   * Reads the file.
   *
   * @return the record, or null when there is no such file
   * @throws InputException when it is damaged
   */
  public static TunedClip read(Path file) throws IOException {
    if (!Files.exists(file)) {
      return null;
    }
    try {
      return MAPPER.readValue(Files.readString(file, StandardCharsets.UTF_8), TunedClip.class);
    } catch (IOException | IllegalArgumentException e) {
      throw new InputException(file, 1, 0, "not a " + FORMAT + " file: " + e.getMessage(), e);
    }
  }
}
