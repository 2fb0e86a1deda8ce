/**
 * Weighted two-sample distance measures that rank the variables of an observed sample (unit weights) against a
 * weighted reference sample, and a permutation test with family-wise adjustment across the variables.
 *
 * <p>Key types:
 * <ul>
 *   <li>{@link triage.core.ranking.WeightedKolmogorovSmirnovTest}: weighted KS distance with exact and
 *       effective-size asymptotic p-values;</li>
 *   <li>{@link triage.core.ranking.WeightedRocAuc}: weighted ROC AUC (Mann–Whitney U), separation
 *       {@code |AUC - 1/2|};</li>
 *   <li>{@link triage.core.ranking.WeightedWasserstein}: weighted Wasserstein-1 distance, raw or in reference
 *       standard deviations;</li>
 *   <li>{@link triage.core.ranking.BinnedJensenShannon} with {@link triage.core.ranking.Binning}: binned
 *       Jensen–Shannon divergence;</li>
 *   <li>{@link triage.core.ranking.MaxTPermutationTest} with {@link triage.core.ranking.TwoSampleStatistic}:
 *       Westfall–Young single-step maxT permutation p-values;</li>
 *   <li>{@link triage.core.ranking.NegativeWeights}: the policy for negative event weights;</li>
 *   <li>{@link triage.core.ranking.RankingArgumentException}: the one exception thrown for bad arguments.</li>
 * </ul>
 *
 * <p>This package uses {@code triage.core.inference} for the Kolmogorov distribution and compensated summation.
 */
package triage.core.ranking;
