/**
 * Calibration of the test statistic with pseudo-experiments (toys) drawn from the reference sample.
 *
 * <ul>
 *   <li>{@link triage.core.calibration.ToySampler} — draws one toy: a Poisson number of events from the reference,
 *   with probability proportional to weight and without replacement;</li>
 *   <li>{@link triage.core.calibration.ToyLog} — finished toys in a JSON-lines file, so interrupted runs resume;</li>
 *   <li>{@link triage.core.calibration.Calibration} — fits toys exactly like the data and summarises the p-value.</li>
 * </ul>
 */
package triage.core.calibration;
