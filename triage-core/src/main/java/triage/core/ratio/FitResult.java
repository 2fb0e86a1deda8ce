package triage.core.ratio;

import java.util.List;

/**
 * Result of {@link RatioTrainer#fit}: the model of the start with the lowest final loss and
 * the figures of the fit (a view of {@link RatioModel#training()}).
 *
 * @param model the fitted model
 */
public record FitResult(RatioModel model) {

  /** Requires a model with a training summary. */
  public FitResult {
    if (model == null || model.training() == null) {
      throw new IllegalArgumentException("a fitted model is required");
    }
  }

  /** Training summary. */
  public TrainingSummary summary() {
    return model.training();
  }

  /** Final training loss of the kept start. */
  public double finalLoss() {
    return summary().finalLoss();
  }

  /** Test statistic t = −2 L_ext(f). */
  public double testStatistic() {
    return summary().testStatistic();
  }

  /** Whether the kept start met the stopping rule. */
  public boolean converged() {
    return summary().converged();
  }

  /** Why the kept start stopped. */
  public StopReason stopReason() {
    return summary().stopReason();
  }

  /** Iterations (or epochs) of the kept start. */
  public int iterations() {
    return summary().iterations();
  }

  /** Loss-and-gradient evaluations over all starts. */
  public long lossEvaluations() {
    return summary().lossEvaluations();
  }

  /** Wall time of the fit in seconds. */
  public double elapsedSeconds() {
    return summary().elapsedSeconds();
  }

  /** Training log of the kept start. */
  public TrainingLog log() {
    return summary().log();
  }

  /** Per-start summaries. */
  public List<RestartSummary> starts() {
    return summary().starts();
  }

  /** Final loss of every start, in start order. */
  public double[] restartLosses() {
    return starts().stream().mapToDouble(RestartSummary::loss).toArray();
  }
}
