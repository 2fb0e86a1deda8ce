package triage.core.select;

import java.util.List;

/**
 * The syntax tree of a condition. Every node keeps the 0-based position of its first character for messages.
 */
public sealed interface Expr {
  /** Position of the node's first character. */
  int pos();

  /** A number. */
  record Num(double value, int pos) implements Expr {}

  /** A quoted text, for category values. */
  record Str(String value, int pos) implements Expr {}

  /** A column (feature, bookkeeping, category, or {@code score:VERSION}). */
  record Col(String name, int pos) implements Expr {}

  /** Arithmetic negation. */
  record Neg(Expr operand, int pos) implements Expr {}

  /** Arithmetic: {@code + - * /}. */
  record Arith(char op, Expr left, Expr right, int pos) implements Expr {}

  /** A function call: abs, min, max, log, sqrt. */
  record Call(String function, List<Expr> args, int pos) implements Expr {}

  /** A comparison: {@code = <> < <= > >=}. */
  record Compare(String op, Expr left, Expr right, int pos) implements Expr {}

  /** {@code x [NOT] BETWEEN lo AND hi} (both ends included, as in SQL). */
  record Between(Expr value, Expr lo, Expr hi, boolean negated, int pos) implements Expr {}

  /** {@code x [NOT] IN (a, b, …)}. */
  record In(Expr value, List<Expr> items, boolean negated, int pos) implements Expr {}

  /** Conjunction. */
  record And(Expr left, Expr right, int pos) implements Expr {}

  /** Disjunction. */
  record Or(Expr left, Expr right, int pos) implements Expr {}

  /** Negation. */
  record Not(Expr operand, int pos) implements Expr {}
}
