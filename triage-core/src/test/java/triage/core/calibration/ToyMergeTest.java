package triage.core.calibration;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;
import java.util.TreeMap;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.core.sample.InputException;

/** Merging toy files: checks before writing, messages naming the file and the reason. */
class ToyMergeTest {
  @TempDir
  Path dir;

  private static ToyLog.Entry e(long k, double t) {
    return new ToyLog.Entry(k, 100 + k, 10, t, true, 5, 0.1);
  }

  @Test
  void mergesRefusesAndNames() throws Exception {
    ToyLog.Header h = new ToyLog.Header(ToyLog.FORMAT, "fp1", "m1", 1L, "null");
    Path folder = dir.resolve("toys");
    Path a = dir.resolve("seed-1-shard-1-of-2.jsonl");
    Path b = dir.resolve("from-elsewhere.jsonl");
    ToyLog.append(a, h, List.of(e(0, 1.5), e(2, 2.5)));
    ToyLog.append(b, h, List.of(e(1, 3.5), e(2, 2.5)));
    ToyMerge.Plan plan = ToyMerge.plan(new TreeMap<>(), folder, List.of(a, b), h);
    assertEquals(3, plan.added());
    assertEquals(1, plan.files().get(1).duplicates());
    assertEquals("seed-1-merged-from-elsewhere.jsonl", plan.files().get(1).target().getFileName().toString());
    ToyMerge.apply(plan, h);
    assertEquals(List.of(0L, 2L), List.copyOf(ToyLog.read(folder.resolve(a.getFileName()), "fp1").keySet()));

    Path otherSeed = dir.resolve("seed-2-shard-1-of-1.jsonl");
    ToyLog.append(otherSeed, new ToyLog.Header(ToyLog.FORMAT, "fp2", "m1", 2L, "null"), List.of(e(0, 1)));
    InputException x = assertThrows(InputException.class,
        () -> ToyMerge.plan(new TreeMap<>(), folder, List.of(otherSeed), h));
    assertTrue(x.getMessage().contains("seed-2-shard-1-of-1.jsonl") && x.getMessage().contains("run seed 2"),
        x.getMessage());

    Path oldFormat = dir.resolve("old.jsonl");
    ToyLog.append(oldFormat, "fp3", List.of(e(0, 1)));
    x = assertThrows(InputException.class, () -> ToyMerge.plan(new TreeMap<>(), folder, List.of(oldFormat), h));
    assertTrue(x.getMessage().contains("fingerprint is fp3"), x.getMessage());

    // with the parts recorded, the refusal names the part that differs
    java.util.Map<String, String> parts = new java.util.LinkedHashMap<>();
    parts.put("fit settings", "s1");
    parts.put("expected count", "300.0");
    ToyLog.Header withParts = new ToyLog.Header(ToyLog.FORMAT, "fp1", "m1", 1L, "null", parts);
    java.util.Map<String, String> otherParts = new java.util.LinkedHashMap<>(parts);
    otherParts.put("expected count", "250.0");
    Path otherCount = dir.resolve("seed-1-other-count.jsonl");
    ToyLog.append(otherCount, new ToyLog.Header(ToyLog.FORMAT, "fp9", "m1", 1L, "null", otherParts),
        List.of(e(0, 1)));
    x = assertThrows(InputException.class,
        () -> ToyMerge.plan(new TreeMap<>(), folder, List.of(otherCount), withParts));
    assertTrue(x.getMessage().contains("its expected count differs (250.0 in the file, 300.0 here)"),
        x.getMessage());
    assertTrue(!x.getMessage().contains("fit settings"), x.getMessage());

    Path clash = dir.resolve("clash.jsonl");
    ToyLog.append(clash, h, List.of(e(1, 3.5000001)));
    TreeMap<Long, ToyLog.Entry> existing = new TreeMap<>(plan.all());
    x = assertThrows(InputException.class, () -> ToyMerge.plan(existing, folder, List.of(clash), h));
    assertTrue(x.getMessage().contains("toy 1 has t = 3.5000001") && x.getMessage().contains("3.5"),
        x.getMessage());

    x = assertThrows(InputException.class, () -> ToyMerge.plan(existing, folder, List.of(dir.resolve("no")), h));
    assertTrue(x.getMessage().contains("no such toy file"), x.getMessage());
    assertTrue(Files.exists(folder.resolve("seed-1-merged-from-elsewhere.jsonl")));
  }

  /** A header line torn by a kill is rewritten before the next toys, so the file stays readable. */
  @Test
  void tornHeaderIsRewritten() throws Exception {
    Path f = dir.resolve("t.jsonl");
    Files.writeString(f, "{\"format\":\"triage-to");
    ToyLog.append(f, "fp", List.of(e(0, 1)));
    assertEquals(1, ToyLog.read(f, "fp").size());
  }
}
