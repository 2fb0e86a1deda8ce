/**
 * Samples and their events: the sample spec, and the streaming reader that checks every row.
 *
 * <ul>
 *   <li>{@link triage.core.sample.SampleSpec} — an analysis' inputs: files, roles and columns;</li>
 *   <li>{@link triage.core.sample.Role} — what a sample is for (reference, observed, follow-up);</li>
 *   <li>{@link triage.core.sample.EventFileReader} — reads one file in batches of primitive arrays;</li>
 *   <li>{@link triage.core.sample.EventBatch} — a reusable block of events, column by column;</li>
 *   <li>{@link triage.core.sample.RowProblem} — one rejected row: file, line, column, text, expectation;</li>
 *   <li>{@link triage.core.sample.InputException} — bad input, reported to the user without a stack trace.</li>
 * </ul>
 */
package triage.core.sample;
