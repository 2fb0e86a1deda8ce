package triage.core.calibration;

import java.io.IOException;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;
import triage.core.sample.InputException;

/**
 * Brings null-toy files made elsewhere (shards run on other machines, on copies of the same index) into this
 * index's toy folder. Every file is checked before anything is written: its settings fingerprint must be this
 * run's, and a toy index found twice (in two files, or in a file and the folder) must carry the same t bit for bit;
 * a toy found twice with the same t is kept once.
 */
public final class ToyMerge {
  private ToyMerge() {
    // no instance
  }

  /**
   * What one file brings.
   *
   * @param source the file given
   * @param target where its new toys go in the toy folder
   * @param added toys new to the folder
   * @param duplicates toys already present (same t)
   */
  public record FilePlan(Path source, Path target, List<ToyLog.Entry> added, int duplicates) {}

  /**
   * The checked merge.
   *
   * @param files one plan per file, in the order given
   * @param all every toy after the merge, by index
   */
  public record Plan(List<FilePlan> files, TreeMap<Long, ToyLog.Entry> all) {
    /** Toys added over all files. */
    public int added() {
      return files.stream().mapToInt(f -> f.added().size()).sum();
    }
  }

  /**
   * Checks the files against the folder's toys.
   *
   * @param existing the toys already in the folder (this fingerprint)
   * @param folder the toy folder
   * @param files the files to bring in
   * @param header this run's header (fingerprint, model, seed)
   * @throws InputException naming the file and the reason when a file cannot be merged
   */
  public static Plan plan(TreeMap<Long, ToyLog.Entry> existing, Path folder, List<Path> files,
      ToyLog.Header header) throws IOException {
    TreeMap<Long, ToyLog.Entry> all = new TreeMap<>(existing);
    Map<Long, Path> from = new HashMap<>();
    existing.keySet().forEach(k -> from.put(k, folder));
    List<FilePlan> plans = new ArrayList<>();
    for (Path f : files) {
      ToyLog.Header h = ToyLog.header(f);
      if (!h.settings().equals(header.settings())) {
        throw new InputException(f, 1, 0, "cannot be merged: " + why(h, header), null);
      }
      TreeMap<Long, ToyLog.Entry> in = ToyLog.read(f, header.settings());
      List<ToyLog.Entry> added = new ArrayList<>();
      int dup = 0;
      for (ToyLog.Entry e : in.values()) {
        ToyLog.Entry old = all.get(e.toy());
        if (old == null) {
          all.put(e.toy(), e);
          from.put(e.toy(), f);
          added.add(e);
        } else if (Double.doubleToLongBits(old.t()) == Double.doubleToLongBits(e.t())) {
          dup++;
        } else {
          throw new InputException(f, String.format(Locale.ROOT, "toy %d has t = %s here but t = %s in %s: the "
              + "same toy fitted twice must give the same t; refusing to merge", e.toy(), e.t(), old.t(),
              from.get(e.toy())));
        }
      }
      plans.add(new FilePlan(f, folder.resolve(targetName(f, header.seed())), added, dup));
    }
    return new Plan(plans, all);
  }

  /** Writes the new toys of a checked plan (appending to the target files). */
  public static void apply(Plan plan, ToyLog.Header header) throws IOException {
    for (FilePlan p : plan.files()) {
      if (!p.added().isEmpty()) {
        ToyLog.append(p.target(), header, p.added());
      }
    }
  }

  /** The file's own name when it follows {@code seed-S-….jsonl} for this seed, else {@code seed-S-merged-NAME}. */
  static String targetName(Path f, Long seed) {
    String name = f.getFileName().toString();
    String prefix = "seed-" + seed + "-";
    if (name.startsWith(prefix) && name.endsWith(".jsonl")) {
      return name;
    }
    return prefix + "merged-" + (name.endsWith(".jsonl") ? name : name + ".jsonl");
  }

  /** Why two headers differ, as far as the recorded fields tell. */
  static String why(ToyLog.Header file, ToyLog.Header run) {
    List<String> reasons = new ArrayList<>();
    if (file.model() != null && !file.model().equals(run.model())) {
      reasons.add("it holds toys of model " + file.model() + ", this run calibrates model " + run.model()
          + " (pass --model " + file.model() + ")");
    }
    if (file.seed() != null && !file.seed().equals(run.seed())) {
      reasons.add("it was made with run seed " + file.seed() + ", this run uses seed " + run.seed()
          + " (pass --seed " + file.seed() + ")");
    }
    if (file.kind() != null && run.kind() != null && !file.kind().equals(run.kind())) {
      reasons.add("it holds " + file.kind() + " toys, not " + run.kind() + " toys");
    }
    if (reasons.isEmpty() && file.parts() != null && run.parts() != null) {
      for (var part : run.parts().entrySet()) {
        String theirs = file.parts().get(part.getKey());
        if (!part.getValue().equals(theirs)) {
          reasons.add("its " + part.getKey() + " differ" + (part.getKey().endsWith("s") ? "" : "s") + " ("
              + theirs + " in the file, " + part.getValue() + " here)");
        }
      }
    }
    if (reasons.isEmpty()) {
      reasons.add("its settings fingerprint is " + file.settings() + " and this index's is " + run.settings()
          + ": the fit settings, expected count, index or model file differ");
    }
    return String.join("; ", reasons);
  }
}
