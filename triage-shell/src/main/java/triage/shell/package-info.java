/**
 * The command line: Picocli commands that parse options, delegate to core and index, and print results.
 *
 * <ul>
 *   <li>{@link triage.shell.Main} — entry point; maps errors to exit codes in one place;</li>
 *   <li>{@link triage.shell.TriageCommand} — the root command and its subcommand list;</li>
 *   <li>{@link triage.shell.Output} — human text or exactly one JSON object on stdout ({@code --json}).</li>
 * </ul>
 */
package triage.shell;
