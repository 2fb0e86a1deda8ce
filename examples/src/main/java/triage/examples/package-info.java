/**
 * The demo scenario and other runnable examples; not public API.
 *
 * <ul>
 *   <li>{@link triage.examples.DemoScenario} — writes the fictional photon-plus-jet samples, their spec and truth.</li>
 * </ul>
 */
package triage.examples;
