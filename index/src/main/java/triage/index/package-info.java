/**
 * The on-disk event index: one folder holding every sample's events, selectable and summable at interactive speed.
 *
 * <ul>
 *   <li>{@link triage.index.EventStore} — an open index: manifest, selections, sums, histograms, events by id;</li>
 *   <li>{@link triage.index.Ingest} — reads a sample spec's files into a new index, all or nothing;</li>
 *   <li>{@link triage.index.Manifest} — what an index holds: schema, counts, sums, fingerprints, versions;</li>
 *   <li>{@link triage.index.Selection} — a box: ranges on numeric columns, sets of category values, samples;</li>
 *   <li>{@link triage.index.SampleSums} and {@link triage.index.Histogram} — results of aggregation;</li>
 *   <li>{@link triage.index.IndexException} — an index that is missing, damaged or of an unknown format.</li>
 * </ul>
 *
 * <p>No Lucene type appears in this package's signatures; the Lucene code lives in {@code triage.index.impl}.
 */
package triage.index;
