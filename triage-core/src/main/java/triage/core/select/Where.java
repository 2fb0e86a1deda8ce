package triage.core.select;

import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeSet;
import java.util.function.ToIntFunction;

/**
 * Conditions in the syntax of SQL's WHERE clause, over an event's columns.
 *
 * <pre>
 * condition  := or
 * or         := and ( OR and )*
 * and        := not ( AND not )*
 * not        := NOT not | comparison
 * comparison := sum [ ( = | &lt;&gt; | != | &lt; | &lt;= | &gt; | &gt;= ) sum
 *                   | [NOT] BETWEEN sum AND sum | [NOT] IN ( literal {, literal} ) ]
 * sum        := product ( ( + | - ) product )*
 * product    := unary ( ( * | / ) unary )*
 * unary      := - unary | primary
 * primary    := number | 'text' | column | function ( sum {, sum} ) | ( condition )
 * function   := abs | min | max | log | sqrt            (log is the natural logarithm)
 * column     := letters, digits, '_', '.', ':' (model scores are score:VERSION), or "any text" in double quotes
 * </pre>
 *
 * <p>Keywords and function names are case-insensitive; column names are not. Category columns compare with quoted
 * text ({@code sector IN ('10', '11')}); numeric columns with numbers. BETWEEN includes both ends. Arithmetic is in
 * double precision; a comparison involving NaN (e.g. {@code log} of a negative number) is false, and so is its
 * negation by NOT only where SQL would give unknown: here NOT of a false comparison is true (two-valued logic).
 * Division by zero follows SQL: a divisor that is 0 when the condition is parsed (a number, or arithmetic on
 * numbers only) is an error with its position; a divisor that is 0 for an event gives NULL, i.e. NaN here, so the
 * comparison is false and the event is not selected (before 2026-12-04, {@code x / 0 > 1} was ±∞ and selected
 * every event with x &gt; 0). docs/where.md has the language for users.
 */
public final class Where {
  /** What a column holds. */
  public enum Kind {
    /** Numbers. */
    NUMBER,
    /** Category text. */
    CATEGORY
  }

  /** Types of expressions. */
  private enum Type {
    NUMBER, TEXT, BOOLEAN
  }

  private Where() {
    // no instance
  }

  // ------------------------------------------------------------------ tokens

  /** A token: its kind, text and position. */
  private record Token(char kind, String text, double number, int pos) {
    // kinds: n number, s string, i identifier, k keyword, o operator, e end
  }

  private static final Set<String> KEYWORDS = Set.of("AND", "OR", "NOT", "BETWEEN", "IN");

  private static List<Token> tokens(String text) {
    List<Token> out = new ArrayList<>();
    int i = 0;
    int n = text.length();
    while (i < n) {
      char c = text.charAt(i);
      if (Character.isWhitespace(c)) {
        i++;
      } else if (Character.isDigit(c) || (c == '.' && i + 1 < n && Character.isDigit(text.charAt(i + 1)))) {
        int start = i;
        while (i < n && (Character.isDigit(text.charAt(i)) || text.charAt(i) == '.')) {
          i++;
        }
        if (i < n && (text.charAt(i) == 'e' || text.charAt(i) == 'E')) {
          int save = i;
          i++;
          if (i < n && (text.charAt(i) == '+' || text.charAt(i) == '-')) {
            i++;
          }
          if (i < n && Character.isDigit(text.charAt(i))) {
            while (i < n && Character.isDigit(text.charAt(i))) {
              i++;
            }
          } else {
            i = save;
          }
        }
        String t = text.substring(start, i);
        if (i < n && (Character.isLetter(text.charAt(i)) || text.charAt(i) == '_')) {
          throw new WhereException(text, i, "a number runs into a name ('" + t + text.charAt(i)
              + "…'); put an operator or a space between them");
        }
        double v;
        try {
          v = Double.parseDouble(t);
        } catch (NumberFormatException e) {
          throw new WhereException(text, start, "'" + t + "' is not a number");
        }
        out.add(new Token('n', t, v, start));
      } else if (c == '\'') {
        int start = i;
        StringBuilder b = new StringBuilder();
        i++;
        while (true) {
          if (i >= n) {
            throw new WhereException(text, start, "text started here is not closed with '");
          }
          char d = text.charAt(i);
          if (d == '\'') {
            if (i + 1 < n && text.charAt(i + 1) == '\'') {
              b.append('\'');
              i += 2;
              continue;
            }
            i++;
            break;
          }
          b.append(d);
          i++;
        }
        out.add(new Token('s', b.toString(), 0, start));
      } else if (c == '"') {
        int start = i;
        int close = text.indexOf('"', i + 1);
        if (close < 0) {
          throw new WhereException(text, start, "column name started here is not closed with \"");
        }
        out.add(new Token('i', text.substring(i + 1, close), 0, start));
        i = close + 1;
      } else if (Character.isLetter(c) || c == '_') {
        int start = i;
        while (i < n && (Character.isLetterOrDigit(text.charAt(i)) || "_.:".indexOf(text.charAt(i)) >= 0)) {
          i++;
        }
        String t = text.substring(start, i);
        String upper = t.toUpperCase(Locale.ROOT);
        out.add(KEYWORDS.contains(upper) ? new Token('k', upper, 0, start) : new Token('i', t, 0, start));
      } else {
        int start = i;
        String two = i + 1 < n ? text.substring(i, i + 2) : "";
        if (two.equals("<=") || two.equals(">=") || two.equals("<>") || two.equals("!=")) {
          out.add(new Token('o', two.equals("!=") ? "<>" : two, 0, start));
          i += 2;
        } else if ("=<>+-*/(),".indexOf(c) >= 0) {
          out.add(new Token('o', String.valueOf(c), 0, start));
          i++;
        } else {
          throw new WhereException(text, start, "unexpected character '" + c + "'");
        }
      }
    }
    out.add(new Token('e', "", 0, n));
    return out;
  }

  // ------------------------------------------------------------------ parser

  /** A recursive-descent parser over the tokens. */
  /** Most operators in one condition. */
  static final int MAX_OPERATORS = 1000;

  /** Deepest nesting of parentheses. */
  static final int MAX_NESTING = 100;

  private static final class Parser {
    private final String text;
    private final List<Token> tokens;
    private int at;

    Parser(String text) {
      this.text = text;
      this.tokens = tokens(text);
      // Bounds on the condition's shape, so that parsing, checking and evaluating it (all recursive) cannot run out
      // of stack: at most 1,000 operators (AND, OR, NOT, + − * /) and 100 levels of parentheses. A long list of
      // values belongs in IN (...), which has no such bound.
      int operators = 0;
      int depth = 0;
      for (int k = 0; k < tokens.size(); k++) {
        Token t = tokens.get(k);
        // a minus sign on a number right after '(' or ',' is the sign of a list value (IN (-1, -2, ...)): not counted
        boolean sign = t.kind() == 'o' && t.text().equals("-") && k > 0 && k + 1 < tokens.size()
            && tokens.get(k + 1).kind() == 'n' && tokens.get(k - 1).kind() == 'o'
            && (tokens.get(k - 1).text().equals("(") || tokens.get(k - 1).text().equals(","));
        boolean op = !sign && (t.kind() == 'k' && List.of("AND", "OR", "NOT").contains(t.text())
            || t.kind() == 'o' && List.of("+", "-", "*", "/").contains(t.text()));
        if (op && ++operators > MAX_OPERATORS) {
          throw new WhereException(text, t.pos(), "condition too long: more than " + MAX_OPERATORS + " operators "
              + "(AND, OR, NOT, + - * /); for a list of values use IN (...)");
        }
        if (t.kind() == 'o' && t.text().equals("(") && ++depth > MAX_NESTING) {
          throw new WhereException(text, t.pos(), "parentheses nested more than " + MAX_NESTING + " deep");
        }
        if (t.kind() == 'o' && t.text().equals(")")) {
          depth--;
        }
      }
    }

    private Token peek() {
      return tokens.get(at);
    }

    private boolean isKeyword(String k) {
      return peek().kind() == 'k' && peek().text().equals(k);
    }

    private boolean isOp(String o) {
      return peek().kind() == 'o' && peek().text().equals(o);
    }

    private WhereException expected(String what) {
      Token t = peek();
      String found = t.kind() == 'e' ? "the end" : "'" + (t.kind() == 's' ? "'" + t.text() + "'" : t.text()) + "'";
      return new WhereException(text, t.pos(), "expected " + what + ", found " + found);
    }

    Expr parseAll() {
      if (peek().kind() == 'e') {
        throw new WhereException(text, 0, "empty selection: expected a condition such as m_gj > 700");
      }
      Expr e = or();
      if (peek().kind() != 'e') {
        throw expected("AND, OR or the end");
      }
      return e;
    }

    private Expr or() {
      Expr left = and();
      while (isKeyword("OR")) {
        Token t = tokens.get(at++);
        left = new Expr.Or(left, and(), t.pos());
      }
      return left;
    }

    private Expr and() {
      Expr left = not();
      while (isKeyword("AND")) {
        Token t = tokens.get(at++);
        left = new Expr.And(left, not(), t.pos());
      }
      return left;
    }

    private Expr not() {
      if (isKeyword("NOT")) {
        Token t = tokens.get(at++);
        return new Expr.Not(not(), t.pos());
      }
      return comparison();
    }

    private Expr comparison() {
      Expr left = sum();
      Token t = peek();
      if (t.kind() == 'o' && List.of("=", "<>", "<", "<=", ">", ">=").contains(t.text())) {
        at++;
        return new Expr.Compare(t.text(), left, sum(), t.pos());
      }
      boolean negated = false;
      if (isKeyword("NOT")) {
        Token next = tokens.get(at + 1);
        if (next.kind() == 'k' && (next.text().equals("BETWEEN") || next.text().equals("IN"))) {
          at++;
          negated = true;
        }
      }
      if (isKeyword("BETWEEN")) {
        at++;
        Expr lo = sum();
        if (!isKeyword("AND")) {
          throw expected("AND in BETWEEN … AND …");
        }
        at++;
        return new Expr.Between(left, lo, sum(), negated, left.pos());
      }
      if (isKeyword("IN")) {
        at++;
        if (!isOp("(")) {
          throw expected("'(' after IN");
        }
        at++;
        List<Expr> items = new ArrayList<>();
        do {
          Token item = peek();
          if (item.kind() == 's') {
            items.add(new Expr.Str(item.text(), item.pos()));
            at++;
          } else {
            Expr e = sum();
            Double v = constant(e);
            if (v == null) {
              throw new WhereException(text, item.pos(), "IN lists take numbers or quoted text only");
            }
            items.add(new Expr.Num(v, item.pos()));
          }
        } while (isOp(",") && at++ >= 0);
        if (!isOp(")")) {
          throw expected("',' or ')' in the IN list");
        }
        at++;
        return new Expr.In(left, items, negated, left.pos());
      }
      return left;
    }

    private Expr sum() {
      Expr left = product();
      while (isOp("+") || isOp("-")) {
        Token t = tokens.get(at++);
        left = new Expr.Arith(t.text().charAt(0), left, product(), t.pos());
      }
      return left;
    }

    private Expr product() {
      Expr left = unary();
      while (isOp("*") || isOp("/")) {
        Token t = tokens.get(at++);
        left = new Expr.Arith(t.text().charAt(0), left, unary(), t.pos());
      }
      return left;
    }

    private Expr unary() {
      if (isOp("-")) {
        Token t = tokens.get(at++);
        Expr operand = unary();
        return operand instanceof Expr.Num num ? new Expr.Num(-num.value(), t.pos()) : new Expr.Neg(operand, t.pos());
      }
      if (isOp("+")) {
        at++;
        return unary();
      }
      return primary();
    }

    private Expr primary() {
      Token t = peek();
      switch (t.kind()) {
        case 'n' -> {
          at++;
          return new Expr.Num(t.number(), t.pos());
        }
        case 's' -> {
          at++;
          return new Expr.Str(t.text(), t.pos());
        }
        case 'i' -> {
          at++;
          if (isOp("(")) {
            String f = t.text().toLowerCase(Locale.ROOT);
            if (!List.of("abs", "min", "max", "log", "sqrt").contains(f)) {
              throw new WhereException(text, t.pos(), "unknown function '" + t.text()
                  + "' (known: abs, min, max, log, sqrt)");
            }
            at++;
            List<Expr> args = new ArrayList<>();
            if (!isOp(")")) {
              do {
                args.add(sum());
              } while (isOp(",") && at++ >= 0);
            }
            if (!isOp(")")) {
              throw expected("',' or ')' in the call of " + f);
            }
            at++;
            int want = f.equals("min") || f.equals("max") ? -2 : 1;
            if (want == 1 ? args.size() != 1 : args.size() < 2) {
              throw new WhereException(text, t.pos(), f + " takes " + (want == 1 ? "one argument" : "two or more arguments")
                  + ", found " + args.size());
            }
            return new Expr.Call(f, args, t.pos());
          }
          return new Expr.Col(t.text(), t.pos());
        }
        default -> {
          if (isOp("(")) {
            at++;
            Expr inner = or();
            if (!isOp(")")) {
              throw expected("')'");
            }
            at++;
            return inner;
          }
          throw expected("a number, a column, a function or '('");
        }
      }
    }
  }

  /** The value of an expression made of numbers only, or null. */
  static Double constant(Expr e) {
    return switch (e) {
      case Expr.Num n -> n.value();
      case Expr.Neg n -> {
        Double v = constant(n.operand());
        yield v == null ? null : -v;
      }
      case Expr.Arith a -> {
        Double l = constant(a.left());
        Double r = constant(a.right());
        yield l == null || r == null ? null : arith(a.op(), l, r);
      }
      default -> null;
    };
  }

  private static double arith(char op, double l, double r) {
    return switch (op) {
      case '+' -> l + r;
      case '-' -> l - r;
      case '*' -> l * r;
      default -> l / r;
    };
  }

  // ------------------------------------------------------------------ types

  private static Type type(Expr e, Map<String, Kind> columns, String text) {
    return switch (e) {
      case Expr.Num n -> Type.NUMBER;
      case Expr.Str s -> Type.TEXT;
      case Expr.Col c -> {
        Kind k = columns.get(c.name());
        if (k == null) {
          throw new WhereException(text, c.pos(), "unknown column '" + c.name() + "' (columns: "
              + String.join(", ", new TreeSet<>(columns.keySet())) + ")");
        }
        yield k == Kind.NUMBER ? Type.NUMBER : Type.TEXT;
      }
      case Expr.Neg n -> number(n.operand(), columns, text, "'-'");
      case Expr.Arith a -> {
        number(a.left(), columns, text, "'" + a.op() + "'");
        Type t = number(a.right(), columns, text, "'" + a.op() + "'");
        Double divisor = a.op() == '/' ? constant(a.right()) : null;
        if (divisor != null && divisor == 0) {
          // SQL: division by zero is an error; a divisor known now is refused now (a column's zero at run time
          // gives NULL, see number())
          throw new WhereException(text, a.right().pos(), "division by zero: this divisor is 0");
        }
        yield t;
      }
      case Expr.Call c -> {
        for (Expr arg : c.args()) {
          number(arg, columns, text, c.function());
        }
        yield Type.NUMBER;
      }
      case Expr.Compare c -> {
        Type l = value(c.left(), columns, text);
        Type r = value(c.right(), columns, text);
        if (l != r) {
          throw new WhereException(text, c.right().pos(), l == Type.TEXT
              ? "a category column compares with quoted text, e.g. '11'"
              : "a numeric value compares with a number, not with text");
        }
        if (l == Type.TEXT && !(c.op().equals("=") || c.op().equals("<>"))) {
          throw new WhereException(text, c.pos(), "categories compare with = or <> only");
        }
        yield Type.BOOLEAN;
      }
      case Expr.Between b -> {
        number(b.value(), columns, text, "BETWEEN");
        number(b.lo(), columns, text, "BETWEEN");
        number(b.hi(), columns, text, "BETWEEN");
        yield Type.BOOLEAN;
      }
      case Expr.In in -> {
        Type v = value(in.value(), columns, text);
        for (Expr item : in.items()) {
          Type t = item instanceof Expr.Str ? Type.TEXT : Type.NUMBER;
          if (t != v) {
            throw new WhereException(text, item.pos(), v == Type.TEXT
                ? "a category column takes quoted text in IN lists, e.g. '11'"
                : "a numeric value takes numbers in IN lists");
          }
        }
        yield Type.BOOLEAN;
      }
      case Expr.And a -> {
        bool(a.left(), columns, text, "AND");
        yield bool(a.right(), columns, text, "AND");
      }
      case Expr.Or o -> {
        bool(o.left(), columns, text, "OR");
        yield bool(o.right(), columns, text, "OR");
      }
      case Expr.Not n -> bool(n.operand(), columns, text, "NOT");
    };
  }

  private static Type value(Expr e, Map<String, Kind> columns, String text) {
    Type t = type(e, columns, text);
    if (t == Type.BOOLEAN) {
      throw new WhereException(text, e.pos(), "expected a value here, found a condition");
    }
    return t;
  }

  private static Type number(Expr e, Map<String, Kind> columns, String text, String where) {
    Type t = type(e, columns, text);
    if (t != Type.NUMBER) {
      throw new WhereException(text, e.pos(), where + " needs a number here" + (t == Type.TEXT
          ? " (category columns only compare with = <> IN)" : ", found a condition"));
    }
    return t;
  }

  private static Type bool(Expr e, Map<String, Kind> columns, String text, String where) {
    Type t = type(e, columns, text);
    if (t != Type.BOOLEAN) {
      throw new WhereException(text, e.pos(), where + " needs a condition here, such as x > 1");
    }
    return t;
  }

  // ------------------------------------------------------------------ public API

  /**
   * Parses and type-checks a condition.
   *
   * @param text the condition, e.g. {@code m_gj BETWEEN 700 AND 800 AND sector <> '11'}
   * @param columns the columns that may be named, with what they hold
   * @throws WhereException with the position of the first problem
   */
  public static Expr parse(String text, Map<String, Kind> columns) {
    Expr e = new Parser(text).parseAll();
    if (type(e, columns, text) != Type.BOOLEAN) {
      throw new WhereException(text, 0, "expected a condition such as m_gj > 700, found a value");
    }
    return e;
  }

  /**
   * The quoted values a checked condition compares each category column with ({@code =}, {@code <>}, {@code IN},
   * {@code NOT IN}, anywhere in the condition): what a caller checks against the values the data hold, to warn
   * about a value that does not occur (a typo selects nothing, or everything with {@code <>}, without an error).
   *
   * @param condition a condition from {@link #parse}
   * @param columns what each column holds
   * @return per category column, the values named for it, in the order first named
   */
  public static Map<String, Set<String>> categoryValues(Expr condition, Map<String, Kind> columns) {
    Map<String, Set<String>> out = new LinkedHashMap<>();
    collectCategoryValues(condition, columns, out);
    return out;
  }

  private static void collectCategoryValues(Expr e, Map<String, Kind> columns, Map<String, Set<String>> out) {
    switch (e) {
      case Expr.And a -> {
        collectCategoryValues(a.left(), columns, out);
        collectCategoryValues(a.right(), columns, out);
      }
      case Expr.Or o -> {
        collectCategoryValues(o.left(), columns, out);
        collectCategoryValues(o.right(), columns, out);
      }
      case Expr.Not n -> collectCategoryValues(n.operand(), columns, out);
      case Expr.Compare c -> {
        if (c.left() instanceof Expr.Col col && columns.get(col.name()) == Kind.CATEGORY
            && c.right() instanceof Expr.Str v) {
          out.computeIfAbsent(col.name(), k -> new java.util.LinkedHashSet<>()).add(v.value());
        } else if (c.right() instanceof Expr.Col col && columns.get(col.name()) == Kind.CATEGORY
            && c.left() instanceof Expr.Str v) {
          out.computeIfAbsent(col.name(), k -> new java.util.LinkedHashSet<>()).add(v.value());
        }
      }
      case Expr.In in -> {
        if (in.value() instanceof Expr.Col col && columns.get(col.name()) == Kind.CATEGORY) {
          for (Expr item : in.items()) {
            out.computeIfAbsent(col.name(), k -> new java.util.LinkedHashSet<>()).add(((Expr.Str) item).value());
          }
        }
      }
      default -> {
        // numbers only
      }
    }
  }

  /** Splits a checked condition into a box and a residual; see {@link Plan}. */
  public static Plan plan(Expr condition, Map<String, Kind> columns) {
    List<Expr> conjuncts = new ArrayList<>();
    flatten(condition, conjuncts);
    Map<String, double[]> ranges = new LinkedHashMap<>();
    Map<String, Set<String>> sets = new LinkedHashMap<>();
    Expr residual = null;
    for (Expr c : conjuncts) {
      if (!boxPart(c, columns, ranges, sets)) {
        residual = residual == null ? c : new Expr.And(residual, c, c.pos());
      }
    }
    boolean empty = false;
    List<Plan.Range> outRanges = new ArrayList<>();
    for (var e : ranges.entrySet()) {
      double[] r = e.getValue();
      if (!(r[0] <= r[1])) {
        empty = true;
      }
      outRanges.add(new Plan.Range(e.getKey(), r[0], Math.max(r[0], r[1])));
    }
    List<Plan.CategorySet> outSets = new ArrayList<>();
    for (var e : sets.entrySet()) {
      if (e.getValue().isEmpty()) {
        empty = true;
      }
      outSets.add(new Plan.CategorySet(e.getKey(), e.getValue()));
    }
    return new Plan(outRanges, outSets, residual, empty);
  }

  private static void flatten(Expr e, List<Expr> out) {
    if (e instanceof Expr.And a) {
      flatten(a.left(), out);
      flatten(a.right(), out);
    } else {
      out.add(e);
    }
  }

  private static boolean boxPart(Expr c, Map<String, Kind> columns, Map<String, double[]> ranges,
      Map<String, Set<String>> sets) {
    if (c instanceof Expr.Compare cmp) {
      Expr left = cmp.left();
      Expr right = cmp.right();
      String op = cmp.op();
      if (!(left instanceof Expr.Col) && right instanceof Expr.Col) {
        Expr t = left;
        left = right;
        right = t;
        op = switch (op) {
          case "<" -> ">";
          case "<=" -> ">=";
          case ">" -> "<";
          case ">=" -> "<=";
          default -> op;
        };
      }
      if (!(left instanceof Expr.Col col)) {
        return false;
      }
      if (columns.get(col.name()) == Kind.CATEGORY) {
        if (op.equals("=") && right instanceof Expr.Str s) {
          intersect(sets, col.name(), Set.of(s.value()));
          return true;
        }
        return false;
      }
      Double v = constant(right);
      if (v == null || v.isNaN() || op.equals("<>")) {
        return false;
      }
      double lo = Double.NEGATIVE_INFINITY;
      double hi = Double.POSITIVE_INFINITY;
      switch (op) {
        case "=" -> {
          lo = v;
          hi = v;
        }
        case "<" -> hi = Math.nextDown(v);
        case "<=" -> hi = v;
        case ">" -> lo = Math.nextUp(v);
        default -> lo = v;
      }
      intersect(ranges, col.name(), lo, hi);
      return true;
    }
    if (c instanceof Expr.Between b && !b.negated() && b.value() instanceof Expr.Col col) {
      Double lo = constant(b.lo());
      Double hi = constant(b.hi());
      if (lo == null || hi == null || lo.isNaN() || hi.isNaN()) {
        return false;
      }
      intersect(ranges, col.name(), lo, hi);
      return true;
    }
    if (c instanceof Expr.In in && !in.negated() && in.value() instanceof Expr.Col col
        && columns.get(col.name()) == Kind.CATEGORY) {
      Set<String> values = new HashSet<>();
      for (Expr item : in.items()) {
        values.add(((Expr.Str) item).value());
      }
      intersect(sets, col.name(), values);
      return true;
    }
    return false;
  }

  private static void intersect(Map<String, double[]> ranges, String column, double lo, double hi) {
    double[] r = ranges.computeIfAbsent(column, k -> new double[] {Double.NEGATIVE_INFINITY,
        Double.POSITIVE_INFINITY});
    r[0] = Math.max(r[0], lo);
    r[1] = Math.min(r[1], hi);
  }

  private static void intersect(Map<String, Set<String>> sets, String column, Set<String> values) {
    Set<String> current = sets.get(column);
    if (current == null) {
      sets.put(column, new HashSet<>(values));
    } else {
      current.retainAll(values);
    }
  }

  /** A compiled numeric expression. */
  @FunctionalInterface
  private interface Num {
    double eval(ValueSource v);
  }

  /**
   * Compiles a checked condition into a test over slots.
   *
   * @param condition a condition from {@link #parse}
   * @param columns what each column holds
   * @param slots the slot of each column named in it (numeric and category columns share one numbering)
   */
  public static RowTest compile(Expr condition, Map<String, Kind> columns, ToIntFunction<String> slots) {
    return switch (condition) {
      case Expr.And a -> {
        RowTest l = compile(a.left(), columns, slots);
        RowTest r = compile(a.right(), columns, slots);
        yield v -> l.test(v) && r.test(v);
      }
      case Expr.Or o -> {
        RowTest l = compile(o.left(), columns, slots);
        RowTest r = compile(o.right(), columns, slots);
        yield v -> l.test(v) || r.test(v);
      }
      case Expr.Not n -> {
        RowTest inner = compile(n.operand(), columns, slots);
        yield v -> !inner.test(v);
      }
      case Expr.Compare c when isText(c.left(), columns) || isText(c.right(), columns) -> {
        if (c.left() instanceof Expr.Str a && c.right() instanceof Expr.Str b) {
          boolean same = a.value().equals(b.value()) == c.op().equals("=");
          yield v -> same;
        }
        Expr colSide = c.left() instanceof Expr.Col ? c.left() : c.right();
        Expr other = colSide == c.left() ? c.right() : c.left();
        int slot = slots.applyAsInt(((Expr.Col) colSide).name());
        boolean equal = c.op().equals("=");
        if (other instanceof Expr.Str s) {
          String value = s.value();
          yield v -> value.equals(v.category(slot)) == equal;
        }
        int otherSlot = slots.applyAsInt(((Expr.Col) other).name());
        yield v -> v.category(slot).equals(v.category(otherSlot)) == equal;
      }
      case Expr.Compare c -> {
        Num l = number(c.left(), slots);
        Num r = number(c.right(), slots);
        yield switch (c.op()) {
          case "=" -> v -> l.eval(v) == r.eval(v);
          case "<>" -> v -> {
            double a = l.eval(v);
            double b = r.eval(v);
            return a < b || a > b;
          };
          case "<" -> v -> l.eval(v) < r.eval(v);
          case "<=" -> v -> l.eval(v) <= r.eval(v);
          case ">" -> v -> l.eval(v) > r.eval(v);
          default -> v -> l.eval(v) >= r.eval(v);
        };
      }
      case Expr.Between b -> {
        Num x = number(b.value(), slots);
        Num lo = number(b.lo(), slots);
        Num hi = number(b.hi(), slots);
        boolean negated = b.negated();
        yield v -> {
          double value = x.eval(v);
          return (value >= lo.eval(v) && value <= hi.eval(v)) != negated;
        };
      }
      case Expr.In in when isText(in.value(), columns) -> {
        int slot = slots.applyAsInt(((Expr.Col) in.value()).name());
        Set<String> values = new HashSet<>();
        for (Expr item : in.items()) {
          values.add(((Expr.Str) item).value());
        }
        boolean negated = in.negated();
        yield v -> values.contains(v.category(slot)) != negated;
      }
      case Expr.In in -> {
        Num x = number(in.value(), slots);
        double[] values = in.items().stream().mapToDouble(i -> ((Expr.Num) i).value()).toArray();
        boolean negated = in.negated();
        yield v -> {
          double value = x.eval(v);
          for (double d : values) {
            if (value == d) {
              return !negated;
            }
          }
          return negated;
        };
      }
      default -> throw new IllegalArgumentException("not a condition: " + condition);
    };
  }

  /** Whether an expression is text: a quoted value or a category column. */
  private static boolean isText(Expr e, Map<String, Kind> columns) {
    return e instanceof Expr.Str || e instanceof Expr.Col c && columns.get(c.name()) == Kind.CATEGORY;
  }

  private static Num number(Expr e, ToIntFunction<String> slots) {
    return switch (e) {
      case Expr.Num n -> {
        double value = n.value();
        yield v -> value;
      }
      case Expr.Col c -> {
        int slot = slots.applyAsInt(c.name());
        yield v -> v.number(slot);
      }
      case Expr.Neg n -> {
        Num inner = number(n.operand(), slots);
        yield v -> -inner.eval(v);
      }
      case Expr.Arith a -> {
        Num l = number(a.left(), slots);
        Num r = number(a.right(), slots);
        yield switch (a.op()) {
          case '+' -> v -> l.eval(v) + r.eval(v);
          case '-' -> v -> l.eval(v) - r.eval(v);
          case '*' -> v -> l.eval(v) * r.eval(v);
          // SQL: x / 0 is NULL here (no error per row), so a comparison with it is false, as with NaN
          default -> v -> {
            double d = r.eval(v);
            return d == 0 ? Double.NaN : l.eval(v) / d;
          };
        };
      }
      case Expr.Call c -> {
        Num[] args = c.args().stream().map(a -> number(a, slots)).toArray(Num[]::new);
        yield switch (c.function()) {
          case "abs" -> v -> Math.abs(args[0].eval(v));
          case "log" -> v -> Math.log(args[0].eval(v));
          case "sqrt" -> v -> Math.sqrt(args[0].eval(v));
          case "min" -> v -> {
            double m = args[0].eval(v);
            for (int i = 1; i < args.length; i++) {
              m = Math.min(m, args[i].eval(v));
            }
            return m;
          };
          default -> v -> {
            double m = args[0].eval(v);
            for (int i = 1; i < args.length; i++) {
              m = Math.max(m, args[i].eval(v));
            }
            return m;
          };
        };
      }
      default -> throw new IllegalArgumentException("not a number: " + e);
    };
  }
}
