/**
 * Accurate sums and weighted moments over event weights and values.
 *
 * <ul>
 *   <li>{@link triage.core.stats.NeumaierSum} — compensated summation, batch by batch;</li>
 *   <li>{@link triage.core.stats.WeightedMoments} — count, weight sums and the weighted mean and variance.</li>
 * </ul>
 */
package triage.core.stats;
