/**
 * Calibration of the test statistic with pseudo-experiments (toys) drawn from the reference sample.
 *
 * <ul>
 *   <li>{@link triage.core.calibration.ToySampler} — draws one toy: a Poisson number of events from the reference,
 *   with probability proportional to weight and without replacement;</li>
 *   <li>{@link triage.core.calibration.ToyLog} — finished toys in a JSON-lines file, so interrupted runs resume;</li>
 *   <li>{@link triage.core.calibration.ToyMerge} — brings in shard files made elsewhere, refusing other settings and
 *   disagreeing toys;</li>
 *   <li>{@link triage.core.calibration.Calibration} — fits toys exactly like the data, with or without an injected
 *   {@link triage.core.calibration.Signal}, and summarises the p-value and the median expected Z;</li>
 *   <li>{@link triage.core.calibration.ClipTuning} — the clip from reference-only toys over clips and iteration
 *   caps, recorded as a {@link triage.core.calibration.TunedClip};</li>
 *   <li>{@link triage.core.calibration.Quantiles} — sample quantiles of toy statistics.</li>
 * </ul>
 */
package triage.core.calibration;
