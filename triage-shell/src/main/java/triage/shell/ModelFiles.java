package triage.shell;

import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import triage.core.ratio.RatioModel;
import triage.index.Manifest;

/**
 * Reads a fitted model version from an index folder. {@code triage fit} stores the model's own JSON plus a
 * {@code provenance} object; the model format does not know that field, so it is taken off before parsing.
 */
final class ModelFiles {
  private ModelFiles() {
    // no instance
  }

  /** The model's own JSON (without the provenance that fit adds). */
  static String json(Path index, Manifest.Model model) throws IOException {
    ObjectNode doc = (ObjectNode) Output.JSON.readTree(Files.readString(index.resolve(model.modelFile())));
    doc.remove("provenance");
    return Output.JSON.writeValueAsString(doc);
  }

  /** The model, parsed. */
  static RatioModel load(Path index, Manifest.Model model) throws IOException {
    return RatioModel.fromJson(json(index, model));
  }
}
