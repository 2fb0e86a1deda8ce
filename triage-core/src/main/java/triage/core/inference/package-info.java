/**
 * Pure statistical inference functions for trace-and-follow-up of an excess: significances, limits,
 * toy-based p-values and chi-squared fits, tested against published and computed check values.
 *
 * <p>Key types:
 * <ul>
 *   <li>{@link triage.core.inference.Significance}: p-value to Z and back, one- and two-sided;</li>
 *   <li>{@link triage.core.inference.CountingSignificance}: likelihood-ratio, Asimov (with and without
 *       background uncertainty), Z_Bi and Li–Ma significances of a counting experiment;</li>
 *   <li>{@link triage.core.inference.ClsUpperLimit} and {@link triage.core.inference.PoissonLimits}: CLs and
 *       classical Poisson limits;</li>
 *   <li>{@link triage.core.inference.EmpiricalPValue} with {@link triage.core.inference.PValueEstimator}:
 *       p-values from toys with binomial uncertainty;</li>
 *   <li>{@link triage.core.inference.ChiSquaredFit} and {@link triage.core.inference.ChiSquaredTail}:
 *       maximum-likelihood dof of toy statistics and asymptotic tail probabilities;</li>
 *   <li>{@link triage.core.inference.OneSampleKolmogorovSmirnovTest} and
 *       {@link triage.core.inference.KolmogorovDistribution}: goodness of fit and the Kolmogorov distribution;</li>
 *   <li>{@link triage.core.inference.InferenceArgumentException}: the one exception thrown for bad arguments.</li>
 * </ul>
 */
package triage.core.inference;
