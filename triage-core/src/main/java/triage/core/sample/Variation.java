package triage.core.sample;

import java.util.Objects;

/**
 * A systematic variation: two weight columns holding each reference event's weight with the
 * uncertain effect shifted up and down by one standard deviation (absolute weights, normalised like the nominal weight).
 *
 * @param name the variation's name, e.g. {@code photon_scale}
 * @param up the column with the weight under the upward shift
 * @param down the column with the weight under the downward shift
 */
public record Variation(String name, String up, String down) {
  /** Checks that all three names are given and the columns differ. */
  public Variation {
    Columns.checkName("variation name", name);
    Columns.checkName("variation '" + name + "' up column", up);
    Columns.checkName("variation '" + name + "' down column", down);
    if (up.equals(down)) {
      throw new IllegalArgumentException("variation '" + name + "' uses column '" + up + "' for both up and down");
    }
    Objects.requireNonNull(name);
  }
}
