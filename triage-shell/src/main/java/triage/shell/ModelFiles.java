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
    Path file = index.resolve(model.modelFile());
    com.fasterxml.jackson.databind.JsonNode node;
    try {
      node = Output.JSON.readTree(Files.readString(file));
    } catch (com.fasterxml.jackson.core.JsonProcessingException e) {
      var at = e.getLocation();
      throw new triage.core.sample.InputException(file, at == null ? 0 : at.getLineNr(),
          at == null ? 0 : at.getColumnNr(), "the model file of version '" + model.version() + "' is damaged: "
          + e.getOriginalMessage(), null);
    }
    if (!(node instanceof ObjectNode doc)) {
      throw new triage.core.sample.InputException(file, "the model file of version '" + model.version()
          + "' is damaged: expected a JSON object");
    }
    doc.remove("provenance");
    return Output.JSON.writeValueAsString(doc);
  }

  /** The model, parsed. */
  static RatioModel load(Path index, Manifest.Model model) throws IOException {
    String json = json(index, model);
    try {
      return RatioModel.fromJson(json);
    } catch (IllegalArgumentException e) {
      throw new triage.core.sample.InputException(index.resolve(model.modelFile()), "the model file of version '"
          + model.version() + "' is damaged: " + e.getMessage());
    }
  }
}
