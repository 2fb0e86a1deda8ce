package triage.core.sample;

/**
 * An open-addressing set of long event ids remembering the line each was first seen on, for the duplicate check.
 * Memory: 12 bytes per slot, at most twice the number of ids; no per-id objects.
 */
final class LongIdSet {
  /** Marks an empty slot in {@link #lines}. */
  private static final int EMPTY = 0;

  /** The ids, by slot. */
  private long[] keys;

  /** First line of each id, plus one (0 marks an empty slot); lines beyond int range are kept as -1. */
  private int[] lines;

  /** Number of ids held. */
  private int size;

  LongIdSet() {
    keys = new long[1 << 16];
    lines = new int[1 << 16];
  }

  /**
   * Adds an id.
   *
   * @return 0 if it was new, else the line it was first seen on (or -1 when that line is beyond int range)
   */
  long add(long id, long line) {
    if (2L * (size + 1) > keys.length) {
      grow();
    }
    int mask = keys.length - 1;
    int slot = mix(id) & mask;
    while (lines[slot] != EMPTY) {
      if (keys[slot] == id) {
        return lines[slot] < 0 ? -1 : lines[slot] - 1L;
      }
      slot = (slot + 1) & mask;
    }
    keys[slot] = id;
    lines[slot] = line + 1 < Integer.MAX_VALUE ? (int) (line + 1) : -1;
    size++;
    return 0;
  }

  /** Number of ids held. */
  int size() {
    return size;
  }

  private void grow() {
    long[] oldKeys = keys;
    int[] oldLines = lines;
    keys = new long[oldKeys.length * 2];
    lines = new int[oldKeys.length * 2];
    int mask = keys.length - 1;
    for (int i = 0; i < oldKeys.length; i++) {
      if (oldLines[i] != EMPTY) {
        int slot = mix(oldKeys[i]) & mask;
        while (lines[slot] != EMPTY) {
          slot = (slot + 1) & mask;
        }
        keys[slot] = oldKeys[i];
        lines[slot] = oldLines[i];
      }
    }
  }

  /** A 64-bit finaliser (from the SplitMix64 generator) so that sequential ids spread over the table. */
  private static int mix(long z) {
    z = (z ^ (z >>> 30)) * 0xbf58476d1ce4e5b9L;
    z = (z ^ (z >>> 27)) * 0x94d049bb133111ebL;
    return (int) (z ^ (z >>> 31));
  }
}
