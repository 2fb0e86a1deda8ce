/**
 * Training engine of the density-ratio model: fits a small fully connected network f(x) to
 * estimate log[n_obs(x) / n_ref(x)] between an observed sample and a weighted reference sample,
 * and gives the test statistic t = −2 min L, per-event scores and input gradients.
 *
 * <p>Key types:
 * <ul>
 *   <li>{@link triage.core.ratio.TrainingData} — feature-major reference and observed samples;</li>
 *   <li>{@link triage.core.ratio.FitSettings} — network, loss, clip, optimiser, stopping rule,
 *       seed, threads;</li>
 *   <li>{@link triage.core.ratio.RatioTrainer} — {@code fit(data, settings)};</li>
 *   <li>{@link triage.core.ratio.FitResult} and {@link triage.core.ratio.TrainingSummary} — t,
 *       loss, convergence, log, per-start figures;</li>
 *   <li>{@link triage.core.ratio.RatioModel} — immutable fitted model: scoring, attribution,
 *       JSON persistence;</li>
 *   <li>{@link triage.core.ratio.StoppingRule}, {@link triage.core.ratio.LossKind},
 *       {@link triage.core.ratio.OptimiserKind}, {@link triage.core.ratio.Activation},
 *       {@link triage.core.ratio.KernelChoice} — the choices;</li>
 *   <li>{@link triage.core.ratio.FitBenchmark} — speed figures (not a test).</li>
 * </ul>
 */
package triage.core.ratio;
