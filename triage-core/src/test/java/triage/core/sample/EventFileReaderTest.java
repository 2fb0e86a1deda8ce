package triage.core.sample;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.OutputStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.zip.GZIPOutputStream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import triage.core.provenance.Fingerprints;

/** One test per kind of bad input, each checking that the message names the file, line and column. */
class EventFileReaderTest {
  @TempDir
  Path dir;

  private static final String HEADER = "event,run,m,pt,sector,w,w_up,w_down";

  private SampleSpec spec(Path file, Role role) {
    Columns columns = new Columns(List.of("m", "pt"), "event", "run", null, List.of("sector"), null);
    return new SampleSpec(SampleSpec.FORMAT, columns, List.of(new Variation("scale", "w_up", "w_down")),
        List.of(new SampleSource("s", role, file.toString(), role.weighted() ? "w" : null)));
  }

  private Path write(String name, String text) throws IOException {
    Path f = dir.resolve(name);
    Files.writeString(f, text);
    return f;
  }

  /** Collected output of one read. */
  private static final class Collected {
    final List<Double> m = new ArrayList<>();
    final List<Double> w = new ArrayList<>();
    final List<Long> ids = new ArrayList<>();
    final List<Long> lines = new ArrayList<>();
    final List<String> sectors = new ArrayList<>();
    final List<RowProblem> rejected = new ArrayList<>();
    ReadResult result;
  }

  private Collected read(Path file, Role role, ReadOptions options) throws IOException {
    Collected c = new Collected();
    SampleSpec spec = spec(file, role);
    c.result = EventFileReader.read(spec, spec.samples().get(0), options, b -> {
      for (int i = 0; i < b.size(); i++) {
        c.m.add(b.feature(i, 0));
        c.w.add(b.weight(i));
        c.ids.add(b.id(i));
        c.lines.add(b.line(i));
        c.sectors.add(b.category(i, 0));
      }
    }, (p, fields) -> c.rejected.add(p));
    return c;
  }

  private InputException fails(String text, Role role) throws IOException {
    Path f = write("bad.csv", text);
    return assertThrows(InputException.class, () -> read(f, role, ReadOptions.strict().withBatchSize(2)));
  }

  private static void assertPlace(InputException e, String file, long line, long column) {
    assertEquals(line, e.line(), e.getMessage());
    assertEquals(column, e.column(), e.getMessage());
    String place = column > 0 ? file + ":" + line + ":" + column + ": " : file + ":" + line + ": ";
    assertTrue(e.getMessage().contains(place), "expected '" + place + "' in: " + e.getMessage());
  }

  @Test
  void readsGoodRowsWithLinesAndSums() throws IOException {
    Path f = write("good.csv", HEADER + "\n1,7,10.5,3,A,0.5,0.6,0.4\n2,7,11.5,4,\"B\",1.5,1.6,1.4\n"
        + "3,8,\"12.5\",5,A,2.0,2.1,1.9\n");
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict().withBatchSize(2));
    assertEquals(List.of(10.5, 11.5, 12.5), c.m);
    assertEquals(List.of(0.5, 1.5, 2.0), c.w);
    assertEquals(List.of(2L, 3L, 4L), c.lines);
    assertEquals(List.of("A", "B", "A"), c.sectors);
    assertEquals(3, c.result.rowsRead());
    assertEquals(4.0, c.result.sumOfWeights());
    assertEquals(0.25 + 2.25 + 4.0, c.result.sumOfSquaredWeights());
    assertEquals(Fingerprints.sha256(f), c.result.sha256());
    // Weighted mean of m: (0.5·10.5 + 1.5·11.5 + 2·12.5)/4, by hand.
    assertEquals((0.5 * 10.5 + 1.5 * 11.5 + 2 * 12.5) / 4, c.result.featureMeans()[0], 1e-15);
  }

  @Test
  void observedEventsWeighOneAndIgnoreVariationColumns() throws IOException {
    Path f = write("obs.csv", "event,run,m,pt,sector,extra\n1,7,10.5,3,A,x\n");
    Collected c = read(f, Role.OBSERVED, ReadOptions.strict());
    assertEquals(List.of(1.0), c.w);
    assertEquals(List.of("extra"), c.result.ignoredColumns());
  }

  @Test
  void readsGzipAndTsvAndCountsTheCompressedBytes() throws IOException {
    Path f = dir.resolve("good.tsv.gz");
    try (OutputStream out = new GZIPOutputStream(Files.newOutputStream(f))) {
      out.write((HEADER.replace(',', '\t') + "\n1\t7\t10.5\t3\tA\t0.5\t0.6\t0.4\n").getBytes(StandardCharsets.UTF_8));
    }
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict());
    assertEquals(List.of(10.5), c.m);
    assertTrue(c.result.compressed());
    assertEquals('\t', c.result.delimiter());
    assertEquals(Fingerprints.sha256(f), c.result.sha256());
  }

  @Test
  void missingFile() {
    Path f = dir.resolve("nothere.csv");
    InputException e = assertThrows(InputException.class, () -> read(f, Role.REFERENCE, ReadOptions.strict()));
    assertTrue(e.getMessage().contains("nothere.csv: file not found"), e.getMessage());
  }

  @Test
  void emptyFile() throws IOException {
    InputException e = fails("", Role.REFERENCE);
    assertPlace(e, "bad.csv", 1, 0);
    assertTrue(e.getMessage().contains("empty file"), e.getMessage());
  }

  @Test
  void headerOnly() throws IOException {
    InputException e = fails(HEADER + "\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 0);
    assertTrue(e.getMessage().contains("no events after the header"), e.getMessage());
  }

  @Test
  void headerLacksADeclaredColumn() throws IOException {
    InputException e = fails("event,run,m,sector,w,w_up,w_down\n1,7,10.5,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 1, 0);
    assertTrue(e.getMessage().contains("header lacks declared column pt"), e.getMessage());
  }

  @Test
  void headerNamesAColumnTwice() throws IOException {
    InputException e = fails("event,run,m,pt,m,sector,w,w_up,w_down\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 1, 5);
  }

  @Test
  void wrongFieldCount() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,A,1,1,1\n2,7,10.5,3,A,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 3, 8);
    assertTrue(e.getMessage().contains(
        "column 'w_down': expected 8 fields as in the header; this row has 7, so this column is missing"),
        e.getMessage());
    InputException more = fails(HEADER + "\n1,7,10.5,3,A,1,1,1,extra,9\n", Role.REFERENCE);
    assertPlace(more, "bad.csv", 2, 9);
    assertTrue(more.getMessage().contains(
        "found 'extra', expected 8 fields as in the header; this row has 10: this is the first field too many"),
        more.getMessage());
  }

  @Test
  void numericParseError() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,A,1,1,1\n2,7,ten,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 3, 3);
    assertTrue(e.getMessage().contains("column 'm': found 'ten', expected a decimal number"), e.getMessage());
  }

  @Test
  void javaSuffixesAreNotNumbers() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5f,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 3);
  }

  @Test
  void nanIsRefused() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,NaN,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 4);
    assertTrue(e.getMessage().contains("found 'NaN', expected a finite number"), e.getMessage());
  }

  @Test
  void infinityIsRefused() throws IOException {
    InputException e = fails(HEADER + "\n1,7,-Infinity,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 3);
    assertTrue(e.getMessage().contains("expected a finite number"), e.getMessage());
    InputException overflow = fails(HEADER + "\n1,7,1e999,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(overflow, "bad.csv", 2, 3);
    assertTrue(overflow.getMessage().contains("found '1e999', expected a number of magnitude at most "),
        overflow.getMessage());
    // 1.8e308 exceeds the largest double, (2 − 2^-52)·2^1023 ≈ 1.7976931348623157e308 (analytic), so it is out of
    // range; the bound the message states must then lie below it (and read as that largest double), not be 1.8e308.
    InputException edge = fails(HEADER + "\n1,7,1.8e308,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(edge, "bad.csv", 2, 3);
    java.util.regex.Matcher bound = java.util.regex.Pattern.compile("at most ([0-9.eE+]+)").matcher(edge.getMessage());
    assertTrue(bound.find(), edge.getMessage());
    assertTrue(new java.math.BigDecimal(bound.group(1)).compareTo(new java.math.BigDecimal("1.8e308")) < 0,
        edge.getMessage());
    assertEquals(Double.MAX_VALUE, Double.parseDouble(bound.group(1)), edge.getMessage());
  }

  @Test
  void sumsBeyondTheRangeOfDoublesAreRefusedNotNaN() throws IOException {
    // (1e200)² = 1e400 overflows binary64 (largest finite about 1.8e308): analytic.
    InputException w = fails(HEADER + "\n1,7,10.5,3,A,1e200,1,1\n", Role.REFERENCE);
    assertTrue(w.getMessage().contains("rescale the weight column"), w.getMessage());
    // 1.5e308 and -1.5e308: their difference overflows, so the spread cannot be formed: analytic.
    InputException x = fails(HEADER + "\n1,7,1.5e308,3,A,1,1,1\n2,7,-1.5e308,3,A,1,1,1\n", Role.REFERENCE);
    assertTrue(x.getMessage().contains("column 'm'") && x.getMessage().contains("rescale the column"),
        x.getMessage());
  }

  @Test
  void aSpreadRefusedForItsSquaresSaysSoAndOneThatFitsIsRead() throws IOException {
    // m = 1e150, 0, -1e150 (weights one): mean 0 and population sd 1e150·√(2/3) ≈ 8.2e149, by hand; the squares
    // (about 1e300) fit in a double, so the file is read.
    Path f = write("wide.csv", HEADER + "\n1,7,1e150,3,A,1,1,1\n2,7,0,3,A,1,1,1\n3,7,-1e150,3,A,1,1,1\n");
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict());
    assertEquals(0.0, c.result.featureMeans()[0]);
    assertEquals(1e150 * Math.sqrt(2.0 / 3), c.result.featureSds()[0], 1e-12 * 1e150);
    // 1e160, 0, -1e160: the sd (8.2e159) is within the range of doubles, but the squares (1e320) are not, so the
    // refusal must name the squares and the size that fits, not claim the mean or sd leave the range.
    InputException e = fails(HEADER + "\n1,7,1e160,3,A,1,1,1\n2,7,0,3,A,1,1,1\n3,7,-1e160,3,A,1,1,1\n",
        Role.REFERENCE);
    assertTrue(e.getMessage().contains("column 'm'") && e.getMessage().contains("squared deviations")
        && e.getMessage().contains("about 1e150"), e.getMessage());
  }

  @Test
  void numbersThatRoundToZeroAreRefusedNotAltered() throws IOException {
    // IEEE 754 binary64: the smallest subnormal is 2^-1074 ≈ 4.94e-324, and a decimal below half of it rounds to
    // 0 (analytic). Such a value is an out-of-range row, not a silent zero.
    InputException e = fails(HEADER + "\n1,7,10.5,-1e-400,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 4);
    assertTrue(e.getMessage().contains("found '-1e-400', expected a number that is zero or of magnitude at least"),
        e.getMessage());
    InputException weight = fails(HEADER + "\n1,7,10.5,3,A,0.00001e-320,1,1\n", Role.REFERENCE);
    assertPlace(weight, "bad.csv", 2, 6);
    // zeros in any spelling and the smallest subnormal are values, kept as written
    Path f = write("tiny.csv", HEADER + "\n1,7,0e-400,-0.000e5,A,1,1,1\n2,7,4.9e-324,1e-310,A,1,1,1\n");
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict());
    assertEquals(List.of(0.0, Double.MIN_VALUE), c.m);
  }

  @Test
  void emptyValue() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 5);
    assertTrue(e.getMessage().contains("expected a category value"), e.getMessage());
  }

  @Test
  void overlongCategoryValue() throws IOException {
    // 1,025 bytes: over the 1,024-byte limit (the index keeps a category value as one term)
    InputException e = fails(HEADER + "\n1,7,10.5,3," + "é".repeat(512) + "x,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 5);
    assertTrue(e.getMessage().contains("a category value of at most 1024 bytes"), e.getMessage());
  }

  @Test
  void categoryBytesThatAreNotUtf8() throws IOException {
    // 0xFF is never UTF-8; it would be decoded as U+FFFD and could merge with other values
    Path f = dir.resolve("bad.csv");
    java.io.ByteArrayOutputStream b = new java.io.ByteArrayOutputStream();
    b.writeBytes((HEADER + "\n1,7,10.5,3,A").getBytes(java.nio.charset.StandardCharsets.UTF_8));
    b.write(0xFF);
    b.writeBytes(",1,1,1\n".getBytes(java.nio.charset.StandardCharsets.UTF_8));
    java.nio.file.Files.write(f, b.toByteArray());
    InputException e = assertThrows(InputException.class,
        () -> read(f, Role.REFERENCE, ReadOptions.strict().withBatchSize(2)));
    assertPlace(e, "bad.csv", 2, 5);
    assertTrue(e.getMessage().contains("a category value in UTF-8 text"), e.getMessage());
  }

  @Test
  void idsBeyondTwoToThe53AreRefused() throws IOException {
    // 2^53 + 1 would merge with 2^53 where ids pass through doubles (selections, exports, region files)
    InputException e = fails(HEADER + "\n9007199254740993,7,10.5,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 1);
    assertTrue(e.getMessage().contains("at most 2^53"), e.getMessage());
    read(write("ok.csv", HEADER + "\n9007199254740992,7,10.5,3,A,1,1,1\n"), Role.REFERENCE,
        ReadOptions.strict());
    // beyond a long as well: the same limit is named
    InputException huge = fails(HEADER + "\n12345678901234567890,7,10.5,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(huge, "bad.csv", 2, 1);
    assertTrue(huge.getMessage().contains("at most 2^53"), huge.getMessage());
  }

  @Test
  void nonIntegerId() throws IOException {
    InputException e = fails(HEADER + "\n1.5,7,10.5,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 1);
    assertTrue(e.getMessage().contains("expected a whole number"), e.getMessage());
  }

  @Test
  void duplicateEventId() throws IOException {
    InputException e = fails(HEADER + "\n5,7,10.5,3,A,1,1,1\n6,7,10.5,3,A,1,1,1\n5,7,1,3,A,1,1,1\n",
        Role.REFERENCE);
    assertPlace(e, "bad.csv", 4, 1);
    assertTrue(e.getMessage().contains("first seen on line 2"), e.getMessage());
  }

  @Test
  void zeroWeightIsRefusedByDefault() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,A,0,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 6);
    assertTrue(e.getMessage().contains("--allow-negative-weights"), e.getMessage());
  }

  /**
   * The stop message suggests {@code --on-bad-row skip} only to commands that have it: a command without it (the
   * follow-up) reads with {@link ReadOptions#withoutSkipSuggestion()} and is told only of the weight option.
   */
  @Test
  void theSkipSuggestionIsLeftOutForCommandsWithoutIt() throws IOException {
    String text = HEADER + "\n1,7,10.5,3,A,-0.5,-0.4,-0.6\n";
    assertTrue(fails(text, Role.REFERENCE).getMessage().contains("--on-bad-row skip"));
    Path f = write("neg.csv", text);
    InputException e = assertThrows(InputException.class, () -> read(f, Role.REFERENCE,
        ReadOptions.strict().withoutSkipSuggestion()));
    assertPlace(e, "neg.csv", 2, 6);
    assertTrue(e.getMessage().contains("use --allow-negative-weights"), e.getMessage());
    assertFalse(e.getMessage().contains("--on-bad-row"), e.getMessage());
  }

  /** The header alone, plain, quoted or gzip-compressed, with a byte-order mark; nothing for an empty file. */
  @Test
  void headerIsReadWithoutTheRows() throws IOException {
    assertEquals(List.of("event", "m", "w"), EventFileReader.header(write("h.csv", "\uFEFFevent, m ,w\n1,2,x\n")));
    assertEquals(List.of("event", "m,n"), EventFileReader.header(write("q.csv", "event,\"m,n\"\n1,2\n")));
    assertEquals(List.of("event", "m"), EventFileReader.header(write("t.tsv", "event\tm\n")));
    Path gz = dir.resolve("h.csv.gz");
    try (OutputStream out = new GZIPOutputStream(Files.newOutputStream(gz))) {
      out.write("event,w\n1,1\n".getBytes(StandardCharsets.UTF_8));
    }
    assertEquals(List.of("event", "w"), EventFileReader.header(gz));
    assertPlace(assertThrows(InputException.class, () -> EventFileReader.header(write("e.csv", ""))), "e.csv", 1, 0);
    assertTrue(assertThrows(InputException.class, () -> EventFileReader.header(dir.resolve("none.csv")))
        .getMessage().contains("file not found"));
  }

  @Test
  void negativeWeightIsRefusedByDefaultAndCountedWhenAllowed() throws IOException {
    String text = HEADER + "\n1,7,10.5,3,A,-0.5,-0.4,-0.6\n2,7,10.5,3,A,0,0,0\n3,7,10.5,3,A,2,2,2\n";
    InputException e = fails(text, Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 6);
    Path f = write("neg.csv", text);
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict().with(WeightPolicy.ANY_FINITE));
    assertEquals(3, c.result.rowsAccepted());
    assertEquals(1, c.result.negativeWeights());
    assertEquals(1, c.result.zeroWeights());
    assertEquals(1.5, c.result.sumOfWeights());
  }

  @Test
  void weightsThatNearlyCancelAreNotTakenForOverflow() throws IOException {
    // Weights 1, 1e-17, -1 (allowed negative weights): Σw = 1e-17 exactly in the compensated sum (1 + 1e-17 - 1,
    // by hand), while a plain running sum reads 0, so the weighted mean is undefined (NaN), as for weights summing
    // to zero. Small values, nothing near the range of doubles: the file is read, not refused as overflowing.
    Path f = write("cancel.csv", HEADER + "\n1,7,10.5,3,A,1,1,1\n2,7,11.5,4,A,1e-17,1,1\n3,7,12.5,5,A,-1,1,1\n");
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict().with(WeightPolicy.ANY_FINITE));
    assertEquals(3, c.result.rowsAccepted());
    assertEquals(1e-17, c.result.sumOfWeights());
    assertEquals(List.of(10.5, 11.5, 12.5), c.m);
  }

  @Test
  void quotedFieldWithNewlineKeepsLineNumbers() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,\"A\nB\",1,1,1\n2,7,x,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 4, 3);
  }

  @Test
  void unterminatedQuoteIsReportedWithItsLine() throws IOException {
    InputException e = fails(HEADER + "\n1,7,10.5,3,\"A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 2, 5);
    assertTrue(e.getMessage().contains("not closed before the end of the file"), e.getMessage());
    // further down the file too (the parser that reads quoted rows starts mid-file)
    InputException later = fails(HEADER + "\n1,7,10.5,3,A,1,1,1\n2,7,10.5,3,A,1,1,1\n3,7,10.5,3,\"A,1,1,1\n",
        Role.REFERENCE);
    assertPlace(later, "bad.csv", 4, 5);
    // the open quote is found past a closed quoted field that spans lines and an escaped quote
    InputException past = fails(HEADER + "\n1,7,10.5,3,\"A\nB\"\"\",1,\"1,1\n2,7,1,1,A,1,1,1\n", Role.REFERENCE);
    assertPlace(past, "bad.csv", 3, 7);
    assertFalse(later.getMessage().contains("startline"), later.getMessage());
  }

  @Test
  void unterminatedQuoteIsPlacedWithLoneCarriageReturnLineEnds() throws IOException {
    // Lone CR ends lines (as in the rest of the reader): the quote opens on line 3 (header, row, row), field 5.
    InputException cr = fails(HEADER + "\r1,7,10.5,3,A,1,1,1\r2,7,10.5,3,\"A,1,1,1\r", Role.REFERENCE);
    assertPlace(cr, "bad.csv", 3, 5);
    // a lone CR inside an earlier quoted field is a line end for the line count too: the open quote is on line 4
    InputException inner = fails(HEADER + "\n1,7,10.5,3,\"A\rB\",1,1,1\n2,7,10.5,3,\"A,1,1,1\n",
        Role.REFERENCE);
    assertPlace(inner, "bad.csv", 4, 5);
  }

  @Test
  void unterminatedQuoteInTheHeaderIsPlaced() throws IOException {
    // event,run,"m,... : the quote opens on line 1 in field 3 and is never closed
    InputException e = fails(HEADER.replace("m,", "\"m,") + "\n1,7,10.5,3,A,1,1,1\n", Role.REFERENCE);
    assertPlace(e, "bad.csv", 1, 3);
    assertTrue(e.getMessage().contains("not closed before the end of the file"), e.getMessage());
    assertFalse(e.getMessage().contains("startline"), e.getMessage());
  }

  @Test
  void skipPolicyReconcilesAndReportsEveryRejectedRow() throws IOException {
    String text = HEADER + "\n1,7,10.5,3,A,1,1,1\n2,7,x,3,A,1,1,1\n3,7,1,3,A,1,1\n1,7,1,3,A,1,1,1\n"
        + "4,7,1,NaN,A,1,1,1\n\n5,7,1,2,B,1,1,1\n";
    Path f = write("mixed.csv", text);
    Collected c = read(f, Role.REFERENCE, ReadOptions.strict().with(BadRowPolicy.SKIP).withBatchSize(2));
    assertEquals(7, c.result.rowsRead());
    assertEquals(2, c.result.rowsAccepted());
    assertEquals(5, c.result.rowsRejected());
    assertEquals(List.of(1L, 5L), c.ids);
    assertEquals(List.of(2L, 8L), c.lines);
    assertEquals(List.of(3L, 4L, 5L, 6L, 7L), c.rejected.stream().map(RowProblem::line).toList());
    assertEquals(java.util.Map.of("not-a-number", 1L, "field-count", 2L, "duplicate-id", 1L, "not-finite", 1L),
        c.result.rejectedByKind());
  }

  /** The header and 200,000 rows (ids 1, 2, ... followed by {@code rest}), gzip-compressed. */
  private static byte[] gzipRows(String rest) throws IOException {
    java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
    try (OutputStream out = new GZIPOutputStream(bytes)) {
      out.write(HEADER.getBytes(StandardCharsets.UTF_8));
      for (int i = 1; i <= 200_000; i++) {
        out.write(("\n" + i + rest).getBytes(StandardCharsets.UTF_8));
      }
    }
    return bytes.toByteArray();
  }

  @Test
  void damagedGzip() throws IOException {
    Path f = dir.resolve("broken.csv.gz");
    byte[] good;
    java.io.ByteArrayOutputStream bytes = new java.io.ByteArrayOutputStream();
    try (OutputStream out = new GZIPOutputStream(bytes)) {
      out.write((HEADER + "\n1,7,10.5,3,A,0.5,0.6,0.4\n".repeat(1)).getBytes(StandardCharsets.UTF_8));
    }
    good = bytes.toByteArray();
    Files.write(f, java.util.Arrays.copyOf(good, good.length / 2));
    InputException e = assertThrows(InputException.class, () -> read(f, Role.REFERENCE, ReadOptions.strict()));
    assertTrue(e.getMessage().contains("broken.csv.gz"), e.getMessage());
    assertTrue(e.getMessage().contains("damaged gzip data"), e.getMessage());
    assertTrue(!e.getMessage().contains("null"), e.getMessage());
    // five bytes: a gzip header cut short, which the JDK reports without a message
    Path tiny = dir.resolve("tiny.csv.gz");
    Files.write(tiny, java.util.Arrays.copyOf(good, 5));
    InputException t = assertThrows(InputException.class, () -> read(tiny, Role.REFERENCE, ReadOptions.strict()));
    assertTrue(t.getMessage().contains("damaged gzip data: the compressed stream ends early"), t.getMessage());
    // many rows, cut in the middle: the message says how far the reading got
    byte[] many = gzipRows(",7,10.5,3,A,0.5,0.6,0.4");
    Path cut = dir.resolve("cut.csv.gz");
    Files.write(cut, java.util.Arrays.copyOf(many, many.length - 100));
    InputException c = assertThrows(InputException.class, () -> read(cut, Role.REFERENCE, ReadOptions.strict()));
    assertTrue(c.getMessage().matches("(?s).*\\(after \\d+ data rows\\).*"), c.getMessage());
    // the same with quoted fields (read by the other parser)
    byte[] quoted = gzipRows(",7,\"10.5\",3,A,0.5,0.6,0.4");
    Path cutQuoted = dir.resolve("cutq.csv.gz");
    Files.write(cutQuoted, java.util.Arrays.copyOf(quoted, quoted.length * 3 / 4));
    InputException q = assertThrows(InputException.class,
        () -> read(cutQuoted, Role.REFERENCE, ReadOptions.strict()));
    assertTrue(q.getMessage().contains("damaged gzip data"), q.getMessage());
  }

  @Test
  void strictNumberParsing() {
    assertEquals(1.5, EventFileReader.parseNumber(" 1.5 "));
    assertEquals(-3e-2, EventFileReader.parseNumber("-3e-2"));
    assertEquals(7.0, EventFileReader.parseNumber("7."));
    assertTrue(Double.isNaN(EventFileReader.parseNumber("0x1p3")));
    assertTrue(Double.isNaN(EventFileReader.parseNumber("2d")));
    assertEquals(Double.POSITIVE_INFINITY, EventFileReader.parseNumber("inf"));
  }
}
