/**
 * Benchmarks that print figures ({@code triage bench ...}); never run in the test suite.
 *
 * <ul>
 *   <li>{@link triage.shell.bench.BenchCommand} — {@code triage bench ingest} and {@code triage bench select};</li>
 *   <li>{@link triage.shell.bench.BenchData} — writes generated samples for them;</li>
 *   <li>{@link triage.shell.bench.HeapSampler} — the peak heap in use while a benchmark runs.</li>
 * </ul>
 */
package triage.shell.bench;
