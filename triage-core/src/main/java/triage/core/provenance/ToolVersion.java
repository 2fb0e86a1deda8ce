package triage.core.provenance;

/** The version of this build of triage, read from the jar manifest (or "dev" when run from classes). */
public final class ToolVersion {
  private ToolVersion() {
    // no instance
  }

  /** The tool's version string. */
  public static String get() {
    String v = ToolVersion.class.getPackage().getImplementationVersion();
    return v == null ? "0.1.0-dev" : v;
  }
}
