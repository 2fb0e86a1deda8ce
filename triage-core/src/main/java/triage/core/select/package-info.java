/**
 * Selections written as the WHERE clause of SQL: parsing with positioned errors, type checks, and compilation into
 * a box (ranges and category sets an index can answer directly) plus a residual test evaluated per event.
 *
 * <ul>
 *   <li>{@link triage.core.select.Where} — parses and plans a condition;</li>
 *   <li>{@link triage.core.select.Expr} — the syntax tree;</li>
 *   <li>{@link triage.core.select.WhereException} — a parse, name or type error with a caret under its place;</li>
 *   <li>{@link triage.core.select.Plan} — the box part and the residual of a condition;</li>
 *   <li>{@link triage.core.select.RowTest} and {@link triage.core.select.ValueSource} — the compiled residual.</li>
 * </ul>
 */
package triage.core.select;
