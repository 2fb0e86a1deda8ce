package triage.core.ratio;

/**
 * One line of the training log.
 *
 * @param iteration             iteration (quasi-Newton) or epoch (Adam), 0 = initial point
 * @param loss                  training loss at that point
 * @param projectedGradientNorm ‖P(θ − ∇L) − θ‖_∞ at that point
 * @param elapsedSeconds        seconds since the start of this random start
 */
public record LogEntry(int iteration, double loss, double projectedGradientNorm,
            double elapsedSeconds) {
}
