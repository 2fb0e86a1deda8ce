package triage.core.ratio;

import java.util.List;

/**
 * Shape of the fully connected network f: R^d → R, d inputs, hidden layers of the given widths
 * with the given activation, and one linear output.
 *
 * <p>Parameter layout in the flat vector θ: for each layer l = 1..L+1 (L hidden layers, layer
 * L+1 the output) first the weight matrix W_l (n_l × n_{l−1}, row-major, W_l[j][k] at
 * {@code weightOffset(l) + j·n_{l−1} + k}) then the bias b_l (n_l entries at
 * {@code biasOffset(l)}). Hence P = Σ_l n_l (n_{l−1} + 1); for d = 5 and widths [5, 5], P = 66.
 * A network without hidden layers (empty widths) is a linear function of the inputs.
 *
 * @param inputs       number of inputs d ≥ 1
 * @param hiddenWidths widths of the hidden layers, each ≥ 1 (may be empty)
 * @param activation   hidden activation
 */
public record Architecture(int inputs, List<Integer> hiddenWidths, Activation activation) {

  /** Validates and copies the widths. */
  public Architecture {
    if (inputs < 1) {
      throw new IllegalArgumentException("inputs must be >= 1: " + inputs);
    }
    hiddenWidths = List.copyOf(hiddenWidths);
    for (int w : hiddenWidths) {
      if (w < 1) {
        throw new IllegalArgumentException("hidden widths must be >= 1: " + hiddenWidths);
      }
    }
    if (activation == null) {
      throw new IllegalArgumentException("activation is null");
    }
  }

  /** Number of layers with parameters (hidden layers + output). */
  public int layerCount() {
    return hiddenWidths.size() + 1;
  }

  /** Width n_l of layer l (0 = inputs, layerCount() = output of width 1). */
  public int width(int layer) {
    if (layer == 0) {
      return inputs;
    }
    return layer <= hiddenWidths.size() ? hiddenWidths.get(layer - 1) : 1;
  }

  /** Offset of W_l in θ, for l in 1..layerCount(). */
  public int weightOffset(int layer) {
    int off = 0;
    for (int l = 1; l < layer; l++) {
      off += width(l) * (width(l - 1) + 1);
    }
    return off;
  }

  /** Offset of b_l in θ, for l in 1..layerCount(). */
  public int biasOffset(int layer) {
    return weightOffset(layer) + width(layer) * width(layer - 1);
  }

  /** Total number of parameters P. */
  public int parameterCount() {
    return weightOffset(layerCount() + 1);
  }

  /** Sum of the hidden widths (number of hidden units). */
  int hiddenUnits() {
    int s = 0;
    for (int w : hiddenWidths) {
      s += w;
    }
    return s;
  }
}
