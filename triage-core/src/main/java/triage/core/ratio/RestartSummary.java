package triage.core.ratio;

/**
 * Outcome of one random start of a fit.
 *
 * @param index                 start index r (0-based)
 * @param seed                  initialisation seed, {@code SplitMix64.derive(runSeed, r)}
 * @param loss                  final training loss
 * @param testStatistic         t = −2 L_ext(f) at the final parameters
 * @param iterations            iterations or epochs
 * @param lossEvaluations       loss-and-gradient evaluations (including the one for t with BCE)
 * @param stopReason            why it stopped
 * @param converged             whether the stopping rule's tests held
 * @param projectedGradientNorm final projected-gradient infinity norm
 * @param elapsedSeconds        wall time of this start
 */
public record RestartSummary(int index, long seed, double loss, double testStatistic,
               int iterations, long lossEvaluations, StopReason stopReason,
               boolean converged, double projectedGradientNorm,
               double elapsedSeconds) {
}
