package triage.core.sample;

import java.io.BufferedInputStream;
import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.Reader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.security.DigestInputStream;
import java.security.MessageDigest;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.zip.GZIPInputStream;
import java.util.zip.ZipException;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVParser;
import org.apache.commons.csv.CSVRecord;
import triage.core.provenance.Fingerprints;
import triage.core.sample.RowProblem.Kind;
import triage.core.stats.NeumaierSum;
import triage.core.stats.WeightedMoments;

/**
 * Streams one sample file (CSV or TSV, plain or gzip-compressed) into batches of primitive arrays, checking every
 * row against the spec.
 *
 * <p>The delimiter is a tab for names ending in {@code .tsv} or {@code .tsv.gz} (or {@code .tab}), else a comma;
 * compression is recognised by the gzip magic bytes, not the name. Memory is bounded by one batch plus the
 * duplicate-id set (12 bytes per slot).
 *
 * <p>Checks, in this order, each reported with file, line and column:
 * <ul>
 *   <li>the file exists, is not empty, and its first line is a header naming every declared column once;</li>
 *   <li>every row has as many fields as the header;</li>
 *   <li>features, weights, variation weights and the score are finite decimal numbers (no NaN, no ±Infinity),
 *   within the range of doubles (text that would round to ±infinity, or to zero without being zero, is
 *   rejected as {@code out-of-range} rather than altered);</li>
 *   <li>id, run and block are whole numbers; categories are not empty;</li>
 *   <li>nominal and variation weights are positive unless {@link WeightPolicy#ANY_FINITE} is chosen;</li>
 *   <li>the event id was not seen before in this file.</li>
 * </ul>
 * A bad row stops the read ({@link BadRowPolicy#FAIL}) or goes to the reject sink ({@link BadRowPolicy#SKIP}).
 */
public final class EventFileReader {
  /** Largest id, run or block magnitude: 2^53, below which every whole number is exactly a double. */
  public static final long MAX_EXACT_INTEGER = 1L << 53;

  /** Longest category value, in UTF-8 bytes (a label, not a text; the index keeps each value as one term). */
  public static final int MAX_CATEGORY_BYTES = 1024;

  private EventFileReader() {
    // no instance
  }

  /**
   * Reads a sample file.
   *
   * @param spec the analysis' spec (columns and variations)
   * @param source the sample to read
   * @param options policies and batch size
   * @param sink receives filled batches
   * @param rejects receives rejected rows when skipping; may be null with {@link BadRowPolicy#FAIL}
   * @return counts and sums of what was read
   * @throws InputException for a missing, empty or malformed file, or the first bad row under FAIL
   * @throws IOException when the sink fails or the file cannot be read
   */
  public static ReadResult read(SampleSpec spec, SampleSource source, ReadOptions options, BatchSink sink,
      RejectSink rejects) throws IOException {
    Path file = source.path();
    if (!Files.isRegularFile(file)) {
      throw new InputException(file, Files.exists(file) ? "not a regular file" : "file not found");
    }
    if (Files.size(file) == 0) {
      throw new InputException(file, 1, 0, "empty file: expected a header line naming the columns", null);
    }
    char delimiter = delimiterFor(file);
    MessageDigest digest = Fingerprints.sha256();
    boolean compressed = gzipped(file);
    Parse parse = null;
    try (InputStream raw = new DigestInputStream(new BufferedInputStream(Files.newInputStream(file), 1 << 16),
        digest)) {
      // The parser closes what it reads; keep the digesting stream open so the rest can be drained below.
      InputStream shielded = new java.io.FilterInputStream(raw) {
        @Override
        public void close() {
          // left open on purpose; the outer try closes the file
        }
      };
      InputStream in = compressed ? new GZIPInputStream(shielded, 1 << 16) : shielded;
      Reader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8), 1 << 20);
      parse = new Parse(spec, source, options, sink, rejects, file, delimiter);
      parse.run(reader);
      // Drain what the parser left unread (a gzip trailer) so that the fingerprint covers the whole file.
      byte[] rest = new byte[1 << 16];
      while (raw.read(rest) > 0) {
        // keep reading
      }
      return parse.result(Fingerprints.hex(digest), compressed);
    } catch (ZipException | java.io.EOFException e) {
      throw damagedGzip(file, 0, e, parse == null ? 0 : parse.rowsRead);
    } catch (NoSuchFileException e) {
      throw new InputException(file, "file not found");
    }
  }

  /** A gzip stream that ends early or does not decompress, with how far the reading got (line 0: not known). */
  static InputException damagedGzip(Path file, long line, Throwable e, long rows) {
    return new InputException(file, line, 0, "damaged gzip data: "
        + (e.getMessage() != null ? e.getMessage() : "the compressed stream ends early")
        + (rows > 0 ? " (after " + rows + " data rows)" : "") + "; expected a whole gzip file", e);
  }

  /** Whether a file starts with the gzip magic bytes. */
  private static boolean gzipped(Path file) throws IOException {
    try (InputStream head = Files.newInputStream(file)) {
      return head.read() == 0x1f && head.read() == 0x8b;
    }
  }

  /** A header field as a column name: blanks stripped, and a byte-order mark taken off the first. */
  static String headerName(String field, int index) {
    String name = field.strip();
    return index == 0 && name.startsWith("\uFEFF") ? name.substring(1) : name;
  }

  /**
   * The column names of a sample file's header line (plain or gzip-compressed, quotes allowed), without reading on:
   * for a command that must choose a column before reading the file.
   *
   * @throws InputException for a missing or empty file, or a header that cannot be read
   */
  public static List<String> header(Path file) throws IOException {
    if (!Files.isRegularFile(file)) {
      throw new InputException(file, Files.exists(file) ? "not a regular file" : "file not found");
    }
    boolean compressed = gzipped(file);
    CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(delimiterFor(file)).setQuote('"').get();
    try (InputStream raw = new BufferedInputStream(Files.newInputStream(file));
        InputStream in = compressed ? new GZIPInputStream(raw) : raw;
        CSVParser parser = CSVParser.builder().setReader(new InputStreamReader(in, StandardCharsets.UTF_8))
            .setFormat(format).get()) {
      Iterator<CSVRecord> it = parser.iterator();
      if (!it.hasNext()) {
        throw new InputException(file, 1, 0, "empty file: expected a header line naming the columns", null);
      }
      List<String> names = new ArrayList<>();
      for (String name : it.next().toList()) {
        names.add(headerName(name, names.size()));
      }
      return names;
    } catch (ZipException | java.io.EOFException e) {
      throw damagedGzip(file, 1, e, 0);
    } catch (UncheckedIOException e) {
      throw new InputException(file, 1, 0, "cannot read the header line: " + e.getCause().getMessage(), e);
    }
  }

  /** Tab for {@code .tsv}, {@code .tab} (optionally {@code .gz}), else comma. */
  static char delimiterFor(Path file) {
    String name = file.getFileName().toString().toLowerCase(java.util.Locale.ROOT);
    if (name.endsWith(".gz")) {
      name = name.substring(0, name.length() - 3);
    }
    return name.endsWith(".tsv") || name.endsWith(".tab") ? '\t' : ',';
  }

  /** The state of one read. */
  private static final class Parse {
    /** The spec's columns. */
    private final Columns columns;

    /** The spec's variations. */
    private final List<Variation> variations;

    /** The sample read. */
    private final SampleSource source;

    /** Policies. */
    private final ReadOptions options;

    /** Receives batches. */
    private final BatchSink sink;

    /** Receives rejected rows. */
    private final RejectSink rejects;

    /** The file read. */
    private final Path file;

    /** The delimiter. */
    private final char delimiter;

    /** Header names. */
    private List<String> header;

    /** Field index of each feature. */
    private int[] featureAt;

    /** Field index of the weight, or -1. */
    private int weightAt = -1;

    /** Field indexes of variation up/down weights, interleaved. */
    private int[] variationAt;

    /** Field index of the id. */
    private int idAt;

    /** Field index of the run, or -1. */
    private int runAt = -1;

    /** Field index of the block, or -1. */
    private int blockAt = -1;

    /** Field indexes of category columns. */
    private int[] categoryAt;

    /** Field index of the score, or -1. */
    private int scoreAt = -1;

    /** Category dictionaries: text → code, and code → text. */
    private final List<Map<String, Integer>> categoryCodes = new ArrayList<>();

    /** Category values by code, per column. */
    private final List<List<String>> categoryValues = new ArrayList<>();

    /** Ids seen. */
    private final LongIdSet ids = new LongIdSet();

    /** Counters. */
    private long rowsRead;

    /** Rows accepted. */
    private long rowsAccepted;

    /** Rows rejected. */
    private long rowsRejected;

    /** Rejected rows by kind. */
    private final Map<String, Long> rejectedByKind = new LinkedHashMap<>();

    /** Accepted events with w < 0. */
    private long negativeWeights;

    /** Accepted events with w == 0. */
    private long zeroWeights;

    /** Σ w. */
    private final NeumaierSum sumW = new NeumaierSum();

    /** Σ w². */
    private final NeumaierSum sumW2 = new NeumaierSum();

    /** Per-feature weighted moments. */
    private WeightedMoments[] moments;

    /** Columns in the header the spec does not name. */
    private final List<String> ignored = new ArrayList<>();

    /** The batch being filled. */
    private EventBatch batch;

    /** The problem found in the current row, if any. */
    private RowProblem problem;

    Parse(SampleSpec spec, SampleSource source, ReadOptions options, BatchSink sink, RejectSink rejects,
        Path file, char delimiter) {
      this.columns = spec.columns();
      this.variations = spec.variations();
      this.source = source;
      this.options = options;
      this.sink = sink;
      this.rejects = rejects;
      this.file = file;
      this.delimiter = delimiter;
      if (options.badRows() == BadRowPolicy.SKIP && rejects == null) {
        throw new IllegalArgumentException("skipping bad rows needs a reject sink");
      }
    }

    /** The current row's fields. */
    private final RowFields fields = new RowFields();

    /**
     * Reads the header and every row: unquoted lines through the {@link LineSplitter} fast path; from the first
     * line holding a double quote on (or from the start when the header holds one), through Commons CSV, with
     * line numbers carried on.
     */
    void run(Reader reader) throws IOException {
      LineSplitter lines = new LineSplitter(reader, delimiter);
      boolean any;
      try {
        any = lines.next(fields);
      } catch (IOException e) {
        throw readFailure(file, e, rowsRead);
      }
      if (lines.quoted()) {
        runCommons(lines.rest(), 0, true);
        return;
      }
      if (!any) {
        throw new InputException(file, 1, 0, "no header line: expected the column names", null);
      }
      readHeader(fields.toList());
      startBatches();
      while (true) {
        long line = lines.linesBefore() + 1;
        try {
          if (!lines.next(fields)) {
            break;
          }
        } catch (IOException e) {
          Throwable root = root(e);
          if (brokenGzip(root)) {
            throw damagedGzip(file, line, root, rowsRead);
          }
          throw new InputException(file, line, 0, "cannot parse the row: " + rootMessage(e), e);
        }
        rowsRead++;
        row(line);
      }
      if (lines.quoted()) {
        runCommons(lines.rest(), lines.linesBefore(), false);
        return;
      }
      flushBatch();
    }

    private void startBatches() {
      int featureCount = featureAt.length;
      moments = new WeightedMoments[featureCount];
      for (int k = 0; k < featureCount; k++) {
        moments[k] = new WeightedMoments();
      }
      batch = new EventBatch(options.batchSize(), featureCount, variationAt.length / 2, categoryAt.length,
          runAt >= 0, blockAt >= 0, scoreAt >= 0, categoryValues);
    }

    private void flushBatch() throws IOException {
      if (batch.size() > 0) {
        sink.accept(batch);
        batch.clear();
      }
    }

    /**
     * Reads the rest through Commons CSV (quoted fields).
     *
     * @param reader the text from the first line to read through Commons CSV
     * @param linesBefore lines read before that text
     * @param header whether the text starts with the header line
     */
    private void runCommons(Reader reader, long linesBefore, boolean header) throws IOException {
      CSVFormat format = CSVFormat.DEFAULT.builder().setDelimiter(delimiter).setIgnoreEmptyLines(false)
          .setQuote('"').get();
      try (CSVParser parser = CSVParser.builder().setReader(reader).setFormat(format).get()) {
        Iterator<CSVRecord> it = parser.iterator();
        if (header) {
          List<String> names;
          try {
            if (!it.hasNext()) {
              throw new InputException(file, 1, 0, "no header line: expected the column names", null);
            }
            names = it.next().toList();
          } catch (UncheckedIOException e) {
            throw unclosedQuote(e, linesBefore + 1);
          }
          readHeader(names);
          startBatches();
        }
        long lineBefore = parser.getCurrentLineNumber();
        while (true) {
          CSVRecord record;
          try {
            if (!it.hasNext()) {
              break;
            }
            record = it.next();
          } catch (UncheckedIOException e) {
            throw unclosedQuote(e, linesBefore + lineBefore + 1);
          }
          long line = linesBefore + lineBefore + 1;
          lineBefore = parser.getCurrentLineNumber();
          rowsRead++;
          fields.set(record.toList());
          row(line);
        }
      } catch (UncheckedIOException e) {
        throw readFailure(file, e, rowsRead);
      }
      flushBatch();
    }

    /** The error for a record starting on line {@code at} that the parser could not read. */
    private InputException unclosedQuote(UncheckedIOException e, long at) {
      Throwable root = root(e);
      if (brokenGzip(root)) {
        return damagedGzip(file, at, root, rowsRead);
      }
      String why = rootMessage(e);
      // the parser's own wording counts lines from where it was started, not from the file's start
      if (why != null && why.contains("EOF reached before encapsulated token finished")) {
        long[] open = openQuote(file, delimiter, at);
        return new InputException(file, open[0], (int) open[1], "cannot parse the row: a quoted field that "
            + "starts here is not closed before the end of the file (expected a closing '\"'; a row cannot "
            + "be set aside when its end cannot be found)", e);
      }
      return new InputException(file, at, 0, "cannot parse the row: " + why, e);
    }

    /**
     * Where the quote left open at the end of the file starts: {line, field} (1-based), scanning the record that
     * starts on {@code line} by the same rules as the parser (a quote opens a field only at its start, two quotes
     * inside a quoted field stand for one). Reads the file again; used only to word the error. If the scan finds
     * no open quote (it should not happen), the field is 0.
     */
    private static long[] openQuote(Path file, char delimiter, long line) {
      try (InputStream raw = new BufferedInputStream(Files.newInputStream(file), 1 << 16)) {
        raw.mark(2);
        boolean gzip = raw.read() == 0x1f && raw.read() == 0x8b;
        raw.reset();
        InputStream in = gzip ? new GZIPInputStream(raw, 1 << 16) : raw;
        Reader r = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8), 1 << 16);
        long current = 1;
        int c;
        while (current < line && (c = next(r)) >= 0) {
          if (c == '\n') {
            current++;
          }
        }
        long openLine = line;
        int field = 1;
        int openField = 0;
        boolean fieldStart = true;
        boolean quoted = false;
        while ((c = next(r)) >= 0) {
          if (quoted) {
            if (c == '"') {
              r.mark(1);
              if (r.read() != '"') {
                r.reset();
                quoted = false;
                openField = 0;
              }
            } else if (c == '\n') {
              current++;
            }
            continue;
          }
          if (c == '"' && fieldStart) {
            quoted = true;
            openField = field;
            openLine = current;
          } else if (c == delimiter) {
            field++;
            fieldStart = true;
            continue;
          } else if (c == '\n') {
            current++;
            field = 1;
            fieldStart = true;
            continue;
          }
          fieldStart = false;
        }
        return quoted ? new long[] {openLine, openField} : new long[] {line, 0};
      } catch (IOException e) {
        return new long[] {line, 0};
      }
    }

    /** The next character, with a line end ({@code \n}, {@code \r\n} or a lone {@code \r}) read as one {@code \n}. */
    private static int next(Reader r) throws IOException {
      int c = r.read();
      if (c == '\r') {
        r.mark(1);
        if (r.read() != '\n') {
          r.reset();
        }
        return '\n';
      }
      return c;
    }

    /** A failed read: damaged gzip data (a truncated or corrupt stream) said so, anything else as it is. */
    static InputException readFailure(Path file, Exception e, long rows) {
      Throwable root = root(e);
      if (brokenGzip(root)) {
        return damagedGzip(file, 0, root, rows);
      }
      return new InputException(file, 0, 0, "cannot read: " + root.getMessage(), e);
    }

    private static String rootMessage(Throwable e) {
      return root(e).getMessage();
    }

    /** Whether a read failed because the gzip stream under it ends early or does not decompress. */
    private static boolean brokenGzip(Throwable root) {
      return root instanceof ZipException || root instanceof java.io.EOFException;
    }

    /** The innermost cause. */
    private static Throwable root(Throwable e) {
      Throwable t = e;
      while (t.getCause() != null) {
        t = t.getCause();
      }
      return t;
    }

    private void readHeader(List<String> names) {
      header = new ArrayList<>();
      Map<String, Integer> at = new HashMap<>();
      for (int i = 0; i < names.size(); i++) {
        String name = headerName(names.get(i), i);
        if (at.put(name, i) != null) {
          throw new InputException(file, 1, i + 1, "header names column '" + name + "' twice", null);
        }
        header.add(name);
      }
      List<String> missing = new ArrayList<>();
      featureAt = new int[columns.features().size()];
      for (int k = 0; k < featureAt.length; k++) {
        featureAt[k] = find(at, columns.features().get(k), missing);
      }
      idAt = find(at, columns.id(), missing);
      if (columns.run() != null) {
        runAt = find(at, columns.run(), missing);
      }
      if (columns.block() != null) {
        blockAt = find(at, columns.block(), missing);
      }
      categoryAt = new int[columns.categories().size()];
      for (int k = 0; k < categoryAt.length; k++) {
        categoryAt[k] = find(at, columns.categories().get(k), missing);
        categoryCodes.add(new HashMap<>());
        categoryValues.add(new ArrayList<>());
      }
      if (columns.score() != null) {
        scoreAt = find(at, columns.score(), missing);
      }
      if (source.weight() != null) {
        weightAt = find(at, source.weight(), missing);
      }
      boolean weighted = source.role().weighted();
      variationAt = new int[weighted ? variations.size() * 2 : 0];
      if (weighted) {
        for (int j = 0; j < variations.size(); j++) {
          variationAt[2 * j] = find(at, variations.get(j).up(), missing);
          variationAt[2 * j + 1] = find(at, variations.get(j).down(), missing);
        }
      }
      if (!missing.isEmpty()) {
        throw new InputException(file, 1, 0, "header lacks declared column" + (missing.size() > 1 ? "s " : " ")
            + String.join(", ", missing) + " (the header has: " + String.join(", ", header) + ")", null);
      }
      java.util.Set<Integer> used = new java.util.HashSet<>();
      for (int i : featureAt) {
        used.add(i);
      }
      for (int i : categoryAt) {
        used.add(i);
      }
      for (int i : variationAt) {
        used.add(i);
      }
      used.add(idAt);
      used.add(runAt);
      used.add(blockAt);
      used.add(scoreAt);
      used.add(weightAt);
      for (int i = 0; i < header.size(); i++) {
        if (!used.contains(i)) {
          ignored.add(header.get(i));
        }
      }
    }

    private static int find(Map<String, Integer> at, String name, List<String> missing) {
      Integer i = at.get(name);
      if (i == null) {
        missing.add(name);
        return -1;
      }
      return i;
    }

    private void row(long line) throws IOException {
      RowFields record = fields;
      problem = null;
      if (record.size() != header.size()) {
        // the place is the first field missing (named by the header) or the first one too many (its text shown)
        boolean few = record.size() < header.size();
        problem = new RowProblem(file, line, (few ? record.size() : header.size()) + 1,
            few ? header.get(record.size()) : null, few ? null : record.get(header.size()), Kind.FIELD_COUNT,
            header.size() + " fields as in the header; this row has " + record.size()
            + (few ? ", so this column is missing" : ": this is the first field too many"));
        reject();
        return;
      }
      int slot = batch.next();
      int nf = featureAt.length;
      for (int k = 0; k < nf && problem == null; k++) {
        batch.features[slot * nf + k] = number(record, featureAt[k], line);
      }
      double w = 1.0;
      if (problem == null && weightAt >= 0) {
        w = weight(record, weightAt, line);
      }
      int nv = variationAt.length;
      for (int j = 0; j < nv && problem == null; j++) {
        batch.variations[slot * nv + j] = weight(record, variationAt[j], line);
      }
      long id = 0;
      if (problem == null) {
        id = integer(record, idAt, line);
      }
      if (problem == null && runAt >= 0) {
        batch.runs[slot] = integer(record, runAt, line);
      }
      if (problem == null && blockAt >= 0) {
        batch.blocks[slot] = integer(record, blockAt, line);
      }
      int nc = categoryAt.length;
      for (int k = 0; k < nc && problem == null; k++) {
        batch.categories[slot * nc + k] = category(record, k, line);
      }
      if (problem == null && scoreAt >= 0) {
        batch.scores[slot] = number(record, scoreAt, line);
      }
      if (problem == null) {
        long first = ids.add(id, line);
        if (first != 0) {
          problem = new RowProblem(file, line, idAt + 1, header.get(idAt), record.get(idAt), Kind.DUPLICATE_ID,
              "an id not seen before in this sample (first seen on line " + (first > 0 ? first : "?") + ")");
        }
      }
      if (problem != null) {
        reject();
        return;
      }
      batch.weights[slot] = w;
      batch.ids[slot] = id;
      batch.lines[slot] = line;
      batch.commit();
      rowsAccepted++;
      sumW.add(w);
      sumW2.add(w * w);
      if (w < 0) {
        negativeWeights++;
      } else if (w == 0) {
        zeroWeights++;
      }
      for (int k = 0; k < nf; k++) {
        moments[k].accept(batch.features[slot * nf + k], w);
      }
      if (batch.full()) {
        sink.accept(batch);
        batch.clear();
      }
    }

    private void reject() throws IOException {
      rowsRejected++;
      rejectedByKind.merge(problem.kind().label(), 1L, Long::sum);
      if (options.badRows() == BadRowPolicy.FAIL) {
        throw new InputException(file, problem.line(), problem.column(), problem.message().substring(
            InputException.place(file, problem.line(), problem.column()).length())
            + (options.suggestSkip() ? " (to set bad rows aside instead, use --on-bad-row skip)" : ""), null);
      }
      rejects.reject(problem, fields.toList());
    }

    private double number(RowFields record, int at, long line) {
      double fast = fastNumber(record.chars, record.from[at], record.to[at]);
      if (fast == fast) {
        return fast;
      }
      String text = record.get(at);
      double v = parseNumber(text);
      String t = text.strip();
      if (v == 0 && hasNonZeroDigit(t)) {
        problem = new RowProblem(file, line, at + 1, header.get(at), text, Kind.OUT_OF_RANGE,
            "a number that is zero or of magnitude at least 4.9e-324 (this one would round to 0)");
        return 0;
      }
      if (Double.isFinite(v)) {
        return v;
      }
      if (Double.isInfinite(v) && isDigitText(t)) {
        problem = new RowProblem(file, line, at + 1, header.get(at), text, Kind.OUT_OF_RANGE,
            "a number of magnitude at most 1.7976931348623157e308, the largest double (this one would round to "
                + "infinity)");
        return 0;
      }
      if (t.isEmpty()) {
        problem = new RowProblem(file, line, at + 1, header.get(at), text, Kind.EMPTY_VALUE, "a finite number");
      } else if (Double.isNaN(v) && !isNanText(t)) {
        problem = new RowProblem(file, line, at + 1, header.get(at), text, Kind.NOT_A_NUMBER,
            "a decimal number such as 12.5 or -3e-2");
      } else {
        problem = new RowProblem(file, line, at + 1, header.get(at), text, Kind.NOT_FINITE,
            "a finite number (NaN and infinities are not accepted)");
      }
      return 0;
    }

    /** Whether the significand of a decimal number (the text before an exponent) has a digit 1–9. */
    private static boolean hasNonZeroDigit(String t) {
      for (int i = 0; i < t.length(); i++) {
        char c = t.charAt(i);
        if (c == 'e' || c == 'E') {
          return false;
        }
        if (c >= '1' && c <= '9') {
          return true;
        }
      }
      return false;
    }

    /** Whether the text is a decimal number (ends in a digit or a point) rather than a spelling of infinity. */
    private static boolean isDigitText(String t) {
      char last = t.charAt(t.length() - 1);
      return last >= '0' && last <= '9' || last == '.';
    }

    private static boolean isNanText(String t) {
      return t.equalsIgnoreCase("nan") || t.equalsIgnoreCase("+nan") || t.equalsIgnoreCase("-nan");
    }

    private double weight(RowFields record, int at, long line) {
      double w = number(record, at, line);
      if (problem == null && !(w > 0) && options.weights() == WeightPolicy.POSITIVE) {
        problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at), Kind.NON_POSITIVE_WEIGHT,
            "a positive weight (to accept zero and negative weights, use --allow-negative-weights)");
      }
      return w;
    }

    private long integer(RowFields record, int at, long line) {
      long fast = fastInteger(record.chars, record.from[at], record.to[at]);
      long value;
      if (fast != NO_INTEGER) {
        value = fast;
      } else {
        String text = record.get(at).strip();
        try {
          value = Long.parseLong(text);
        } catch (NumberFormatException e) {
          // digits only but beyond a long: the same limit as below is what was missed
          boolean digits = text.matches("[+-]?[0-9]+");
          problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at),
              text.isEmpty() ? Kind.EMPTY_VALUE : Kind.NOT_AN_INTEGER,
              digits ? "a whole number of magnitude at most 2^53 = 9007199254740992" : "a whole number");
          return 0;
        }
      }
      // Ids, runs and blocks meet doubles on their way through selections, exports and region files: beyond 2^53
      // neighbouring values would merge, so they are refused here rather than altered later.
      if (value > MAX_EXACT_INTEGER || value < -MAX_EXACT_INTEGER) {
        problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at), Kind.NOT_AN_INTEGER,
            "a whole number of magnitude at most 2^53 = 9007199254740992");
        return 0;
      }
      return value;
    }

    private int category(RowFields record, int k, long line) {
      int at = categoryAt[k];
      String text = record.get(at).strip();
      if (text.isEmpty()) {
        problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at), Kind.EMPTY_VALUE,
            "a category value");
        return 0;
      }
      if (text.indexOf('\uFFFD') >= 0) {
        // the reader decodes bytes that are not UTF-8 as U+FFFD; two different byte strings would merge into one
        // category value, so such a value is refused
        problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at), Kind.NOT_UTF8,
            "a category value in UTF-8 text");
        return 0;
      }
      if (text.length() > MAX_CATEGORY_BYTES / 3
          && text.getBytes(java.nio.charset.StandardCharsets.UTF_8).length > MAX_CATEGORY_BYTES) {
        problem = new RowProblem(file, line, at + 1, header.get(at), record.get(at), Kind.TOO_LONG,
            "a category value of at most " + MAX_CATEGORY_BYTES + " bytes");
        return 0;
      }
      Map<String, Integer> codes = categoryCodes.get(k);
      Integer code = codes.get(text);
      if (code == null) {
        code = codes.size();
        codes.put(text, code);
        categoryValues.get(k).add(text);
      }
      return code;
    }

    ReadResult result(String sha256, boolean compressed) {
      if (rowsRead == 0) {
        throw new InputException(file, 2, 0, "no events after the header line", null);
      }
      int nf = featureAt.length;
      double[] means = new double[nf];
      double[] sds = new double[nf];
      if (!(Double.isFinite(sumW.value()) && Double.isFinite(sumW2.value()))) {
        throw new InputException(file, "the weights are too large for their sum and sum of squares to stay within "
            + "the range of doubles (weights up to about 1e154 can be squared): rescale the weight column");
      }
      for (int k = 0; k < nf; k++) {
        means[k] = moments[k].mean();
        sds[k] = moments[k].populationStandardDeviation();
        // Where the mean and spread are defined (the running weight sum is positive), only overflow makes them
        // infinite or NaN; weights that cancel leave them undefined (NaN), which is not an overflow.
        if (moments[k].defined() && !(Double.isFinite(means[k]) && Double.isFinite(sds[k]))) {
          throw new InputException(file, "column '" + header.get(featureAt[k]) + "': its values are too large for "
              + "their differences from the mean and the weighted sum of squared deviations (from which the "
              + "standard deviation is computed) to stay within the range of doubles (values of magnitude up to "
              + "about 1e150 fit): rescale the column");
        }
      }
      return new ReadResult(source.name(), file.toString(), sha256, compressed, delimiter, rowsRead, rowsAccepted,
          rowsRejected, rejectedByKind, negativeWeights, zeroWeights, sumW.value(), sumW2.value(), means, sds,
          ignored);
    }
  }

  /** What {@link #fastInteger} returns when it cannot decide (a long it never returns). */
  static final long NO_INTEGER = Long.MIN_VALUE;

  /** Exact powers of ten 10^0 … 10^22 (each is a double without rounding). */
  private static final double[] POWERS = new double[23];

  static {
    double p = 1;
    for (int i = 0; i < POWERS.length; i++) {
      POWERS[i] = p;
      p *= 10;
    }
  }

  /**
   * The fast path of {@link #parseNumber} for the common spelling {@code [+-]digits[.digits][(e|E)[+-]digits]}
   * with no blanks: NaN when the text has another form (then the caller takes the full path), else the same double
   * as {@link Double#parseDouble}. Exact by Clinger's fast path: when the digits form an integer m ≤ 2^53 and the
   * decimal exponent e has |e| ≤ 22, both m and 10^|e| are doubles without rounding, so the one multiplication or
   * division m·10^e, m/10^−e is correctly rounded, as {@code parseDouble} is ("How to read floating point numbers
   * accurately", PLDI 1990). Other cases (more digits, larger exponents) return NaN.
   */
  static double fastNumber(char[] a, int from, int to) {
    int i = from;
    if (i >= to) {
      return Double.NaN;
    }
    boolean negative = false;
    char c = a[i];
    if (c == '-' || c == '+') {
      negative = c == '-';
      i++;
    }
    long m = 0;
    int digits = 0;
    int digitChars = 0;
    int scale = 0;
    boolean point = false;
    for (; i < to; i++) {
      c = a[i];
      if (c >= '0' && c <= '9') {
        digitChars++;
        if (digits > 0 || c != '0') {
          if (++digits > 18) {
            return Double.NaN;
          }
        }
        m = m * 10 + (c - '0');
        if (point) {
          scale++;
        }
      } else if (c == '.' && !point) {
        point = true;
      } else {
        break;
      }
    }
    if (digitChars == 0) {
      return Double.NaN;
    }
    int exponent = 0;
    if (i < to) {
      c = a[i];
      if (c != 'e' && c != 'E') {
        return Double.NaN;
      }
      i++;
      boolean negativeExponent = false;
      if (i < to && (a[i] == '-' || a[i] == '+')) {
        negativeExponent = a[i] == '-';
        i++;
      }
      if (i >= to) {
        return Double.NaN;
      }
      for (; i < to; i++) {
        c = a[i];
        if (c < '0' || c > '9' || exponent > 1000) {
          return Double.NaN;
        }
        exponent = exponent * 10 + (c - '0');
      }
      if (negativeExponent) {
        exponent = -exponent;
      }
    }
    if (m > (1L << 53)) {
      return Double.NaN;
    }
    int e = exponent - scale;
    double v;
    if (m == 0) {
      v = 0.0;
    } else if (e >= 0 && e <= 22) {
      v = m * POWERS[e];
    } else if (e < 0 && e >= -22) {
      v = m / POWERS[-e];
    } else {
      return Double.NaN;
    }
    return negative ? -v : v;
  }

  /**
   * The fast path of whole-number parsing for {@code [+-]digits} with at most 18 digits and no blanks: the value,
   * or {@link #NO_INTEGER} when the text has another form (then the caller uses {@link Long#parseLong}).
   */
  static long fastInteger(char[] a, int from, int to) {
    int i = from;
    if (i >= to) {
      return NO_INTEGER;
    }
    boolean negative = false;
    char c = a[i];
    if (c == '-' || c == '+') {
      negative = c == '-';
      i++;
    }
    int n = to - i;
    if (n <= 0 || n > 18) {
      return NO_INTEGER;
    }
    long v = 0;
    for (; i < to; i++) {
      c = a[i];
      if (c < '0' || c > '9') {
        return NO_INTEGER;
      }
      v = v * 10 + (c - '0');
    }
    return negative ? -v : v;
  }

  /**
   * Parses a decimal number strictly: NaN for text that is not a plain decimal number, and the parsed value
   * (which may be infinite or NaN) for the spellings of NaN and infinity, so the caller can tell them apart.
   * Java's suffixes ({@code 1f}, {@code 2d}) and hexadecimal floats are refused.
   */
  static double parseNumber(String text) {
    String t = text.strip();
    if (t.isEmpty()) {
      return Double.NaN;
    }
    char last = t.charAt(t.length() - 1);
    if (!(last >= '0' && last <= '9') && last != '.') {
      String lower = t.toLowerCase(java.util.Locale.ROOT);
      if (lower.equals("inf") || lower.equals("+inf") || lower.equals("infinity") || lower.equals("+infinity")) {
        return Double.POSITIVE_INFINITY;
      }
      if (lower.equals("-inf") || lower.equals("-infinity")) {
        return Double.NEGATIVE_INFINITY;
      }
      return Double.NaN;
    }
    if (t.indexOf('x') >= 0 || t.indexOf('X') >= 0) {
      return Double.NaN;
    }
    try {
      return Double.parseDouble(t);
    } catch (NumberFormatException e) {
      return Double.NaN;
    }
  }
}
