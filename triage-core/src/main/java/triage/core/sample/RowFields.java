package triage.core.sample;

import java.util.ArrayList;
import java.util.List;

/**
 * The fields of one row as character ranges, refilled for every row (mutable on purpose: it is the reader's
 * scratch space, never handed out). Numbers are parsed from the ranges directly; a field becomes a string only
 * when its text is needed (categories, error reports, rejected rows).
 */
final class RowFields {
  /** The characters the ranges point into. */
  char[] chars;

  /** Start of each field in {@link #chars}. */
  int[] from = new int[16];

  /** End (exclusive) of each field in {@link #chars}. */
  int[] to = new int[16];

  /** Number of fields. */
  int size;

  /** Characters owned by this row, used when fields are copied in ({@link #set}). */
  private char[] own = new char[256];

  /** Adds a field [start, end) of {@link #chars}. */
  void add(int start, int end) {
    if (size == from.length) {
      from = java.util.Arrays.copyOf(from, size * 2);
      to = java.util.Arrays.copyOf(to, size * 2);
    }
    from[size] = start;
    to[size] = end;
    size++;
  }

  /** Replaces the row by these values (copied). */
  void set(List<String> values) {
    int total = 0;
    for (String v : values) {
      total += v.length();
    }
    if (own.length < total) {
      own = new char[Math.max(total, own.length * 2)];
    }
    chars = own;
    size = 0;
    int at = 0;
    for (String v : values) {
      v.getChars(0, v.length(), own, at);
      add(at, at + v.length());
      at += v.length();
    }
  }

  /** Number of fields. */
  int size() {
    return size;
  }

  /** Field i as text. */
  String get(int i) {
    return new String(chars, from[i], to[i] - from[i]);
  }

  /** Every field as text. */
  List<String> toList() {
    List<String> out = new ArrayList<>(size);
    for (int i = 0; i < size; i++) {
      out.add(get(i));
    }
    return out;
  }
}
