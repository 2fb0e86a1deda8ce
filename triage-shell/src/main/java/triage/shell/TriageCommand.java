package triage.shell;

import picocli.CommandLine;
import picocli.CommandLine.Command;
import triage.shell.bench.BenchCommand;

/** The root command: prints usage when called bare. */
@Command(name = "triage", mixinStandardHelpOptions = true, versionProvider = VersionProvider.class,
    description = {"Trace, check and hand over an excess of observed events over a simulated reference sample.",
        ""},
    commandListHeading = "%nCommands:%n",
    footer = ExitCodes.FOOTER,
    subcommands = {DemoCommand.class, GenerateCommand.class, IngestCommand.class, InfoCommand.class, SelectCommand.class, RankCommand.class, FitCommand.class, CalibrateCommand.class, RegionCommand.class, FollowupCommand.class, HistCommand.class, MapCommand.class, BreakdownCommand.class, ExportCommand.class, DeriveCommand.class, StressCommand.class, EventsCommand.class, ScanCommand.class, ConsoleCommand.class, RunCommand.class,
        BenchCommand.class, CommandLine.HelpCommand.class})
public final class TriageCommand implements Runnable {
  /** Filled by picocli. */
  @CommandLine.Spec
  CommandLine.Model.CommandSpec spec;

  @Override
  public void run() {
    spec.commandLine().usage(spec.commandLine().getOut());
  }
}
