/**
 * Frozen signal regions and their follow-up on independent data.
 *
 * <ul>
 *   <li>{@link triage.core.region.Region} — the region file ({@code triage-region/1}): cuts, model, discovery
 *   yields, provenance and the discovery events' ids for the overlap guard;</li>
 *   <li>{@link triage.core.region.IdSet} — a compact, exact set of event ids;</li>
 *   <li>{@link triage.core.region.FollowUp} — the statistics of a region on independent data.</li>
 * </ul>
 */
package triage.core.region;
