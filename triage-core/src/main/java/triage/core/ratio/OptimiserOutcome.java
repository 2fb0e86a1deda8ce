package triage.core.ratio;

/**
 * Result of one optimiser run from one starting point.
 *
 * @param parameters  final parameters (inside the box)
 * @param loss        loss at {@code parameters}
 * @param iterations  iterations (or epochs) done
 * @param evaluations loss-and-gradient evaluations done
 * @param reason      why it stopped
 * @param converged   whether the stopping rule's tests held at the end
 * @param projectedGradientNorm projected-gradient infinity norm at the end
 * @param log         bounded training log
 */
record OptimiserOutcome(double[] parameters, double loss, int iterations, long evaluations,
            StopReason reason, boolean converged, double projectedGradientNorm,
            TrainingLog log) {
}
