package triage.shell;

import picocli.CommandLine;
import triage.core.provenance.ToolVersion;

/** Supplies {@code --version}. */
public final class VersionProvider implements CommandLine.IVersionProvider {
  @Override
  public String[] getVersion() {
    return new String[] {"triage " + ToolVersion.get(), "Java " + Runtime.version()};
  }
}
