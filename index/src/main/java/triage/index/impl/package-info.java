/**
 * The Lucene implementation of the event index (internal: no type here appears in a public signature outside).
 *
 * <ul>
 *   <li>{@link triage.index.impl.Fields} — which columns become which Lucene fields;</li>
 *   <li>{@link triage.index.impl.LuceneIngest} — writes documents and commits the manifest atomically;</li>
 *   <li>{@link triage.index.impl.LuceneEventStore} — selections, sums and histograms over doc values;</li>
 *   <li>{@link triage.index.impl.Layout} — the binary form of one event (kept as binary doc values).</li>
 * </ul>
 *
 * @triage.internal
 */
package triage.index.impl;
