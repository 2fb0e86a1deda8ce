package triage.core.ratio;

import java.util.List;

/**
 * How a {@link RatioModel} was fitted; persisted with it.
 *
 * @param settings        the fit settings
 * @param referenceCount  number of reference events
 * @param observedCount   N_obs
 * @param expectedCount   N_exp used to normalise the reference weights
 * @param finalLoss       training loss of the kept start
 * @param testStatistic   t = −2 L_ext(f) of the kept start
 * @param converged       whether the kept start met the stopping rule
 * @param stopReason      why the kept start stopped
 * @param iterations      iterations of the kept start
 * @param lossEvaluations evaluations over all starts
 * @param elapsedSeconds  wall time of the whole fit
 * @param kernel          name of the kernel that evaluated the loss
 * @param log             training log of the kept start
 * @param starts          one summary per random start
 */
public record TrainingSummary(FitSettings settings, int referenceCount, int observedCount,
               double expectedCount, double finalLoss, double testStatistic,
               boolean converged, StopReason stopReason, int iterations,
               long lossEvaluations, double elapsedSeconds, String kernel,
               TrainingLog log, List<RestartSummary> starts) {

  /** Copies the list of starts. */
  public TrainingSummary {
    starts = List.copyOf(starts);
  }
}
