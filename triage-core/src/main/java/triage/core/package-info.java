/**
 * The data model of triage: what an analysis' samples are and how their events are read, checked and summed.
 *
 * <ul>
 *   <li>{@link triage.core.sample} — sample specs, roles, streaming CSV/TSV reading with strict validation;</li>
 *   <li>{@link triage.core.stats} — accurate sums and weighted moments;</li>
 *   <li>{@link triage.core.provenance} — file fingerprints and the tool version.</li>
 * </ul>
 */
package triage.core;
