/**
 * Where results come from: file fingerprints and the tool's version.
 *
 * <ul>
 *   <li>{@link triage.core.provenance.Fingerprints} — SHA-256 of files and streams;</li>
 *   <li>{@link triage.core.provenance.ToolVersion} — the version of this build.</li>
 * </ul>
 */
package triage.core.provenance;
