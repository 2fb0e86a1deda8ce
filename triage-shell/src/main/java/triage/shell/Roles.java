package triage.shell;

import triage.core.sample.InputException;
import triage.core.sample.Role;
import triage.index.Manifest;

/** The samples of an index by role, with a clear error when the index has none. */
final class Roles {
  private Roles() {
    // no instance
  }

  /** The position in the manifest of the first sample with this role. */
  static int ordinal(Manifest m, Role role) {
    for (int i = 0; i < m.samples().size(); i++) {
      if (m.samples().get(i).role() == role) {
        return i;
      }
    }
    throw new InputException(null, "the index has no " + role + " sample");
  }

  /** The name of the first sample with this role. */
  static String name(Manifest m, Role role) {
    return m.samples().get(ordinal(m, role)).name();
  }
}
