package triage.core.sample;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.IOException;
import java.io.StringReader;
import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVParser;
import org.apache.commons.csv.CSVRecord;
import org.junit.jupiter.api.Test;

/**
 * The fast splitter gives the same rows and line numbers as Commons CSV with the reader's format on text without
 * double quotes (generated text over an alphabet of delimiters, line breaks, blanks and letters), and hands over
 * at the first quoted line; the fast number paths agree with {@link Double#parseDouble} and {@link Long#parseLong}
 * bit for bit.
 */
class LineSplitterTest {
  /** A row and the line it starts on. */
  record Row(long line, List<String> fields) {}

  private static List<Row> commons(String text, char delimiter) throws IOException {
    CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(delimiter).setIgnoreEmptyLines(false)
        .setQuote('"').get();
    List<Row> rows = new ArrayList<>();
    try (CSVParser parser = CSVParser.builder().setReader(new StringReader(text)).setFormat(format).get()) {
      long before = parser.getCurrentLineNumber();
      for (CSVRecord r : parser) {
        rows.add(new Row(before + 1, r.toList()));
        before = parser.getCurrentLineNumber();
      }
    }
    return rows;
  }

  private static List<Row> fast(String text, char delimiter, int chunk) throws IOException {
    // A reader that hands out at most `chunk` characters per call, to cross buffer refills anywhere.
    StringReader base = new StringReader(text);
    java.io.Reader in = new java.io.Reader() {
      @Override
      public int read(char[] cbuf, int off, int len) throws IOException {
        return base.read(cbuf, off, Math.min(len, chunk));
      }

      @Override
      public void close() {}
    };
    LineSplitter s = new LineSplitter(in, delimiter);
    RowFields f = new RowFields();
    List<Row> rows = new ArrayList<>();
    while (true) {
      long line = s.linesBefore() + 1;
      if (!s.next(f)) {
        break;
      }
      rows.add(new Row(line, f.toList()));
    }
    assertTrue(!s.quoted());
    return rows;
  }

  @Test
  void sameRowsAsCommonsCsvOnTextWithoutQuotes() throws IOException {
    String alphabet = ",\t\n\r a1.\u00e9";
    SplittableRandom r = new SplittableRandom(5);
    for (int t = 0; t < 20_000; t++) {
      int n = r.nextInt(30);
      StringBuilder b = new StringBuilder();
      for (int i = 0; i < n; i++) {
        b.append(alphabet.charAt(r.nextInt(alphabet.length())));
      }
      String text = b.toString();
      for (char d : new char[] {',', '\t'}) {
        List<Row> expected = commons(text, d);
        assertEquals(expected, fast(text, d, 1 + r.nextInt(7)), () -> "text " + text.replace("\r", "\\r")
            .replace("\n", "\\n").replace("\t", "\\t"));
      }
    }
  }

  @Test
  void longRowsGrowTheBuffer() throws IOException {
    String row = "x".repeat(200_000) + ",y\n";
    String text = "a,b\n" + row + row;
    assertEquals(commons(text, ','), fast(text, ',', 1 << 20));
  }

  @Test
  void stopsAtTheFirstQuotedLineAndHandsOverTheRest() throws IOException {
    String text = "a,b\n1,2\r\n3,\"x\ny\"\n5,6\n";
    LineSplitter s = new LineSplitter(new StringReader(text), ',');
    RowFields f = new RowFields();
    assertTrue(s.next(f));
    assertTrue(s.next(f));
    assertEquals(List.of("1", "2"), f.toList());
    assertTrue(!s.next(f));
    assertTrue(s.quoted());
    assertEquals(2, s.linesBefore());
    StringBuilder rest = new StringBuilder();
    char[] buf = new char[3];
    java.io.Reader in = s.rest();
    for (int n; (n = in.read(buf, 0, buf.length)) > 0; ) {
      rest.append(buf, 0, n);
    }
    assertEquals("3,\"x\ny\"\n5,6\n", rest.toString());
  }

  @Test
  void fastNumbersMatchParseDoubleBitForBit() {
    SplittableRandom r = new SplittableRandom(11);
    String[] fixed = {"0", "-0", "+0", "0.0", "-0.0", "1", "-1", "1.", ".5", "+.5", "-.5", "0.1", "0.3",
        "123456789012345678", "9007199254740993", "9007199254740992", "1e22", "1e23", "1e-22", "1e-23",
        "4.35", "1.7976931348623157e308", "4.9e-324", "2.2250738585072014E-308", "0.000001", "999999.999999",
        "1e+5", "1E5", "1e", "e5", ".", "-", "+", "", "1.2.3", "1e5.5", "12a", "0x10", "1d", "1f", "NaN",
        "Infinity", " 1", "1 ", "00012.50000", "1e-0", "3e0100"};
    List<String> texts = new ArrayList<>(List.of(fixed));
    for (int i = 0; i < 200_000; i++) {
      texts.add(switch (i % 4) {
        case 0 -> Double.toString(r.nextDouble() * Math.pow(10, r.nextInt(-30, 30)));
        case 1 -> String.format(java.util.Locale.ROOT, "%." + r.nextInt(12) + "f", r.nextGaussian() * 1e4);
        case 2 -> (r.nextBoolean() ? "-" : "") + r.nextLong(1L << 60) + (r.nextBoolean() ? "" : "e"
            + r.nextInt(-40, 40));
        default -> Long.toString(r.nextLong(-1_000_000_000_000L, 1_000_000_000_000L)) + "." + r.nextInt(1_000_000);
      });
    }
    int fastHits = 0;
    for (String t : texts) {
      double fast = EventFileReader.fastNumber(t.toCharArray(), 0, t.length());
      double full = EventFileReader.parseNumber(t);
      if (!Double.isNaN(fast)) {
        fastHits++;
        assertEquals(Double.doubleToRawLongBits(full), Double.doubleToRawLongBits(fast), t);
        assertEquals(Double.doubleToRawLongBits(Double.parseDouble(t)), Double.doubleToRawLongBits(fast), t);
      }
    }
    // Double.toString gives up to 17 digits, which take the full path; the other generated forms mostly do not.
    assertTrue(fastHits > texts.size() / 4, "fast path taken " + fastHits + " times");
  }

  @Test
  void fastIntegersMatchParseLong() {
    String[] texts = {"0", "-0", "+7", "-7", "123456789012345678", "1234567890123456789", "9223372036854775807",
        "-9223372036854775808", "1.5", "", "-", "+", " 1", "1 ", "1e3", "007"};
    for (String t : texts) {
      long fast = EventFileReader.fastInteger(t.toCharArray(), 0, t.length());
      if (fast != EventFileReader.NO_INTEGER) {
        assertEquals(Long.parseLong(t), fast, t);
      }
    }
    assertEquals(EventFileReader.NO_INTEGER, EventFileReader.fastInteger("1.5".toCharArray(), 0, 3));
  }
}
