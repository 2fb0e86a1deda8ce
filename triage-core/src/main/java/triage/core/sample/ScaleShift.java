package triage.core.sample;

import java.util.List;

/**
 * A systematic declared as a relative scale uncertainty of some features, such as an energy scale: at one
 * standard deviation every listed feature of every reference event is multiplied by {@code 1 ± relative}, and the
 * events (and any model score of them) are evaluated again.
 *
 * @param name the systematic's name, e.g. {@code photon_energy_scale}
 * @param features the features it scales (all by the same factor)
 * @param relative the one-standard-deviation relative shift, e.g. 0.01 for 1%
 */
public record ScaleShift(String name, List<String> features, double relative) {
  /** Checks names and that the shift is a fraction in (0, 1). */
  public ScaleShift {
    Columns.checkName("scale shift name", name);
    if (features == null || features.isEmpty()) {
      throw new IllegalArgumentException("scale shift '" + name + "' names no features");
    }
    features = List.copyOf(features);
    if (!(relative > 0 && relative < 1)) {
      throw new IllegalArgumentException("scale shift '" + name + "' needs a relative shift in (0, 1), e.g. 0.01 "
          + "for 1%, not " + relative);
    }
  }
}
