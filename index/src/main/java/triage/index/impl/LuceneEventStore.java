package triage.index.impl;

import com.fasterxml.jackson.core.JsonProcessingException;
import java.io.EOFException;
import java.io.IOException;
import java.io.OutputStream;
import java.io.UncheckedIOException;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.channels.FileChannel;
import java.nio.charset.StandardCharsets;
import java.nio.file.AccessDeniedException;
import java.nio.file.DirectoryStream;
import java.nio.file.Files;
import java.nio.file.NoSuchFileException;
import java.nio.file.Path;
import java.nio.file.StandardCopyOption;
import java.nio.file.StandardOpenOption;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.ArrayList;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.stream.IntStream;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.apache.lucene.document.DoublePoint;
import org.apache.lucene.document.FloatPoint;
import org.apache.lucene.document.LongPoint;
import org.apache.lucene.index.BinaryDocValues;
import org.apache.lucene.index.CorruptIndexException;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.DocValues;
import org.apache.lucene.index.IndexFormatTooNewException;
import org.apache.lucene.index.IndexFormatTooOldException;
import org.apache.lucene.index.IndexNotFoundException;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.LeafReaderContext;
import org.apache.lucene.index.NoMergePolicy;
import org.apache.lucene.index.ReaderUtil;
import org.apache.lucene.index.SegmentInfos;
import org.apache.lucene.search.BooleanClause;
import org.apache.lucene.search.BooleanQuery;
import org.apache.lucene.search.DocIdSetIterator;
import org.apache.lucene.search.IndexSearcher;
import org.apache.lucene.search.MatchAllDocsQuery;
import org.apache.lucene.search.MatchNoDocsQuery;
import org.apache.lucene.search.Query;
import org.apache.lucene.search.ScoreDoc;
import org.apache.lucene.search.ScoreMode;
import org.apache.lucene.search.Scorer;
import org.apache.lucene.search.TermInSetQuery;
import org.apache.lucene.search.TopDocs;
import org.apache.lucene.search.Weight;
import org.apache.lucene.store.FSDirectory;
import org.apache.lucene.store.LockObtainFailedException;
import org.apache.lucene.util.Bits;
import org.apache.lucene.util.BytesRef;
import triage.core.provenance.Fingerprints;
import triage.core.select.Expr;
import triage.core.select.Plan;
import triage.core.select.RowTest;
import triage.core.select.ValueSource;
import triage.core.select.Where;
import triage.core.stats.NeumaierSum;
import triage.index.ColumnKind;
import triage.index.EventRecord;
import triage.index.EventStore;
import triage.index.Histogram;
import triage.index.IndexException;
import triage.index.Manifest;
import triage.index.SampleSums;
import triage.index.Selection;

/**
 * An open Lucene event index.
 *
 * <p>Selections become a conjunction of point range and term queries on the columns that have them; the other
 * conditions (sample, block, variation weights, model scores) are checked on each matching event's binary form.
 * Sums and histograms read the binary doc values of the matching documents segment by segment, in parallel, and
 * combine the per-segment results in segment order, so results do not depend on the thread count.
 */
public final class LuceneEventStore implements EventStore {
  /** Prefix of model-score column names in selections. */
  public static final String SCORE_PREFIX = "score:";

  /** Magic bytes at the start of a score file. */
  private static final int SCORE_MAGIC = 0x54525343;

  /** Score file format version. */
  private static final int SCORE_FORMAT = 1;

  /** Score file header size in bytes: magic, format, count. */
  private static final int SCORE_HEADER = 16;

  /** The index folder. */
  private final Path dir;

  /** The Lucene directory. */
  private final FSDirectory directory;

  /** The point-in-time reader. */
  private final DirectoryReader reader;

  /** The searcher over it. */
  private final IndexSearcher searcher;

  /** The manifest (replaced when scores are added). */
  private volatile Manifest manifest;

  /** The binary form of events in this index. */
  private final Layout layout;

  /** Whether double columns have double points (format 1) rather than float points checked exactly (format 2). */
  private final boolean doublePoints;

  /** Loaded score arrays by version. */
  private final Map<String, double[]> scoreCache = new ConcurrentHashMap<>();

  private LuceneEventStore(Path dir, FSDirectory directory, DirectoryReader reader, Manifest manifest) {
    this.dir = dir;
    this.directory = directory;
    this.reader = reader;
    this.searcher = new IndexSearcher(reader);
    this.manifest = manifest;
    this.layout = new Layout(manifest.spec());
    this.doublePoints = Fields.hasDoublePoints(manifest.format());
  }

  /** See {@link EventStore#open}. */
  public static LuceneEventStore open(Path dir) {
    if (!Files.isDirectory(dir)) {
      throw new IndexException(dir, Files.exists(dir) ? "is not an index folder"
          : "no index here (create one with 'triage ingest')");
    }
    FSDirectory directory = null;
    DirectoryReader reader = null;
    try {
      directory = FSDirectory.open(dir);
      reader = DirectoryReader.open(directory);
      String json = reader.getIndexCommit().getUserData().get(Fields.MANIFEST_KEY);
      if (json == null) {
        throw new IndexException(dir, "holds a search index that was not written by triage (no manifest)");
      }
      Manifest manifest;
      try {
        manifest = Manifest.fromJson(json);
      } catch (JsonProcessingException e) {
        Throwable root = e;
        while (root.getCause() != null) {
          root = root.getCause();
        }
        throw new IndexException(dir, root instanceof IllegalArgumentException ? root.getMessage()
            : "its manifest is damaged: " + e.getOriginalMessage());
      }
      if (reader.numDocs() != manifest.totalEvents()) {
        throw new IndexException(dir, "is damaged: it holds " + reader.numDocs() + " events but its manifest says "
            + manifest.totalEvents());
      }
      String commit = dir.toAbsolutePath().normalize() + "#" + reader.getIndexCommit().getSegmentsFileName();
      if (!VERIFIED.contains(commit)) {
        verifyChecksums(reader);
        VERIFIED.add(commit);
      }
      return new LuceneEventStore(dir, directory, reader, manifest);
    } catch (IndexException e) {
      closeQuietly(reader, directory);
      throw e;
    } catch (IndexNotFoundException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "no index here (create one with 'triage ingest'; an ingest that did not "
          + "finish leaves none)");
    } catch (CorruptIndexException | EOFException | NoSuchFileException e) {
      closeQuietly(reader, directory);
      String why = String.valueOf(e.getMessage());
      Matcher resource = RESOURCE_PATH.matcher(why);
      if (resource.find()) {
        // Lucene's message names the file inside a description of its reader: name the file, keep the reason
        String file = Path.of(resource.group(1)).getFileName().toString();
        int cut = why.indexOf(" (resource=");
        String reason = why.startsWith("checksum failed") ? "fails its checksum"
            : "does not read as written (" + (cut > 0 ? why.substring(0, cut) : why) + ")";
        throw new IndexException(dir, "is damaged: its file " + file + " " + reason + " (it changed after it was "
            + "written: a disk or copy error?); ingest it again with --replace", e);
      }
      throw new IndexException(dir, "is damaged (" + why + "); ingest it again with --replace", e);
    } catch (IndexFormatTooNewException | IndexFormatTooOldException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "was written in a storage format this version cannot read ("
          + e.getMessage() + ")", e);
    } catch (AccessDeniedException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "cannot be read: permission denied", e);
    } catch (IllegalArgumentException e) {
      closeQuietly(reader, directory);
      throw unknownCodecOr(dir, e, "open it with the version of triage that wrote it");
    } catch (IOException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "cannot be opened: " + e, e);
    }
  }

  /**
   * Commits whose files this process has verified ({@link #verifyChecksums}), by folder and segments file: the
   * console and {@code triage run} open the index for every command, and reading the whole index each time would
   * cost every command that much (a new commit, e.g. after an ingest, is verified again).
   */
  private static final Set<String> VERIFIED = ConcurrentHashMap.newKeySet();

  /**
   * Reads every data file of the commit once and compares its checksum with the one in its footer, so that a damaged
   * file is refused here, with a clear message, instead of giving wrong numbers or a crash later: Lucene itself checks
   * the whole of a file only when it merges. The segments are checked in parallel; the cost is one read of the index
   * (measured in DEVELOPERS.md, "The event index").
   */
  private static void verifyChecksums(DirectoryReader reader) throws IOException {
    try {
      reader.leaves().parallelStream().forEach(leaf -> {
        try {
          leaf.reader().checkIntegrity();
        } catch (IOException e) {
          throw new UncheckedIOException(e);
        }
      });
    } catch (UncheckedIOException e) {
      throw e.getCause();
    }
  }

  /** The file a Lucene damage message names, inside its description of the reader. */
  private static final Pattern RESOURCE_PATH = Pattern.compile("path=\"([^\"]*)\"");

  /** Lucene's message when a segment names a codec that no jar on the class path registers. */
  private static final Pattern UNKNOWN_CODEC =
      Pattern.compile("SPI class of type org\\.apache\\.lucene\\.codecs\\.Codec with name '([^']*)' does not exist");

  /**
   * A clear message for a commit whose segments name a codec this installation lacks (an index written by a later
   * version, or a class path without {@code META-INF/services/org.apache.lucene.codecs.Codec}); any other failure
   * is returned as it is (a bug).
   */
  static RuntimeException unknownCodecOr(Path dir, IllegalArgumentException e, String advice) {
    for (Throwable t = e; t != null; t = t.getCause()) {
      Matcher m = UNKNOWN_CODEC.matcher(String.valueOf(t.getMessage()));
      if (m.find()) {
        return new IndexException(dir, "was written with the index codec '" + m.group(1) + "', which this "
            + "installation of triage cannot read (it has " + org.apache.lucene.codecs.Codec.availableCodecs()
            + "; a later version's codec needs that version, " + EventCodec.NAME + " needs the index jar's "
            + "META-INF/services entry); " + advice, e);
      }
    }
    return e;
  }

  private static void closeQuietly(AutoCloseable... resources) {
    for (AutoCloseable c : resources) {
      if (c != null) {
        try {
          c.close();
        } catch (Exception ignored) {
          // the first failure is already being reported
        }
      }
    }
  }

  @Override
  public Path dir() {
    return dir;
  }

  @Override
  public Manifest manifest() {
    return manifest;
  }

  @Override
  public void close() throws IOException {
    try {
      reader.close();
    } finally {
      directory.close();
    }
  }

  // ---------------------------------------------------------------- selections

  /** A range checked on the binary form (columns without points) or on a score file (by row). */
  private record Residual(Layout.Place place, double[] scores, double lo, double hi) {
    boolean holds(byte[] b, int base) {
      double x = scores != null ? scores[(int) Layout.getLong(b, base + Layout.ROW)] : Layout.value(b, base, place);
      return x >= lo && x <= hi;
    }
  }

  /** The compiled form of a selection: a Lucene query plus checks on each matching event's binary form. */
  private record Compiled(Query query, boolean[] samples, List<Residual> residuals, RowTest test,
      ValueReader[] readers, String[] categoryColumns) {
    boolean holds(byte[] b, int base, EventSource source) {
      if (samples != null && !samples[Layout.getInt(b, base + Layout.SAMPLE)]) {
        return false;
      }
      for (Residual r : residuals) {
        if (!r.holds(b, base)) {
          return false;
        }
      }
      if (test != null) {
        source.bytes = b;
        source.base = base;
        return test.test(source);
      }
      return true;
    }
  }

  /** One event's values for a residual condition; one per segment task, pointed at each event in turn. */
  private final class EventSource implements ValueSource {
    /** The compiled selection. */
    final Compiled compiled;

    /** The event's binary form. */
    byte[] bytes;

    /** Where it starts. */
    int base;

    EventSource(Compiled compiled) {
      this.compiled = compiled;
    }

    @Override
    public double number(int slot) {
      return compiled.readers()[slot].value(bytes, base);
    }

    @Override
    public String category(int slot) {
      String column = compiled.categoryColumns()[slot];
      int sample = Layout.getInt(bytes, base + Layout.SAMPLE);
      int code = Layout.getInt(bytes, base + layout.place(column).offset());
      return manifest.samples().get(sample).categories().get(column).get(code);
    }
  }

  @Override
  public Map<String, Where.Kind> kinds() {
    Map<String, Where.Kind> kinds = new LinkedHashMap<>();
    for (Manifest.Column c : manifest.columns()) {
      kinds.put(c.name(), c.kind() == ColumnKind.CATEGORY ? Where.Kind.CATEGORY : Where.Kind.NUMBER);
    }
    for (var v : manifest.spec().variations()) {
      kinds.put(v.up(), Where.Kind.NUMBER);
      kinds.put(v.down(), Where.Kind.NUMBER);
    }
    for (Manifest.Model m : manifest.models()) {
      kinds.put(SCORE_PREFIX + m.version(), Where.Kind.NUMBER);
    }
    return kinds;
  }

  @Override
  public Selection where(String condition) {
    Map<String, Where.Kind> kinds = kinds();
    Expr e = Where.parse(condition, kinds);
    Plan plan = Where.plan(e, kinds);
    if (plan.empty()) {
      return new Selection(List.of(), List.of(), Set.of(), e);
    }
    List<Selection.Range> ranges = new ArrayList<>();
    for (Plan.Range r : plan.ranges()) {
      ranges.add(new Selection.Range(r.column(), r.lo(), r.hi()));
    }
    List<Selection.CategoryIn> sets = new ArrayList<>();
    for (Plan.CategorySet c : plan.categories()) {
      sets.add(new Selection.CategoryIn(c.column(), c.values()));
    }
    return new Selection(ranges, sets, Set.of(), plan.residual());
  }

  private int sampleOrdinal(String name) {
    List<Manifest.Sample> samples = manifest.samples();
    for (int i = 0; i < samples.size(); i++) {
      if (samples.get(i).name().equals(name)) {
        return i;
      }
    }
    throw new IndexException(dir, "has no sample '" + name + "' (it has: " + sampleNames() + ")");
  }

  private String sampleNames() {
    return String.join(", ", manifest.samples().stream().map(Manifest.Sample::name).toList());
  }

  /** Every selectable column name, for error messages. */
  private String columnNames() {
    List<String> names = new ArrayList<>(manifest.columns().stream().map(Manifest.Column::name).toList());
    for (var v : manifest.spec().variations()) {
      names.add(v.up());
      names.add(v.down());
    }
    for (Manifest.Model m : manifest.models()) {
      names.add(SCORE_PREFIX + m.version());
    }
    return String.join(", ", names);
  }

  /** Whether a name refers to a model's scores kept in a score file. */
  private boolean isScoreFile(String column) {
    if (!column.startsWith(SCORE_PREFIX) || layout.place(column) != null) {
      return false;
    }
    String version = column.substring(SCORE_PREFIX.length());
    Manifest.Model m = manifest.model(version);
    if (m == null) {
      throw new IndexException(dir, "has no model version '" + version + "' (it has: "
          + String.join(", ", manifest.models().stream().map(Manifest.Model::version).toList()) + ")");
    }
    return !"column".equals(m.source());
  }

  /** The binary-form place of a column (the external score also answers to score:external). */
  private Layout.Place place(String column) {
    Layout.Place p = layout.place(column);
    if (p == null && column.equals(SCORE_PREFIX + "external") && manifest.spec().columns().score() != null) {
      p = layout.place(manifest.spec().columns().score());
    }
    if (p == null) {
      throw new IndexException(dir, "has no column '" + column + "' (it has: " + columnNames() + ")");
    }
    return p;
  }

  private String resolveExternal(String column) {
    return column.equals(SCORE_PREFIX + "external") && manifest.spec().columns().score() != null
        ? manifest.spec().columns().score() : column;
  }

  private Compiled compile(Selection selection) throws IOException {
    BooleanQuery.Builder b = new BooleanQuery.Builder();
    int clauses = 0;
    boolean[] samples = null;
    if (!selection.samples().isEmpty()) {
      samples = new boolean[manifest.samples().size()];
      for (String name : selection.samples()) {
        samples[sampleOrdinal(name)] = true;
      }
    }
    List<Residual> residuals = new ArrayList<>();
    for (Selection.Range r : selection.ranges()) {
      if (isScoreFile(r.column())) {
        residuals.add(new Residual(null, scores(r.column().substring(SCORE_PREFIX.length())), r.lo(), r.hi()));
        continue;
      }
      String column = resolveExternal(r.column());
      Layout.Place p = place(column);
      Manifest.Column c = manifest.column(column);
      if (p.slot() == Layout.Slot.CODE) {
        throw new IndexException(dir, "column '" + column + "' holds categories: select it with a set of values");
      }
      boolean pointed = c != null && (c.kind() == ColumnKind.FEATURE || c.kind() == ColumnKind.SCORE
          || c.kind() == ColumnKind.ID || c.kind() == ColumnKind.RUN);
      if (!pointed) {
        residuals.add(new Residual(p, null, r.lo(), r.hi()));
        continue;
      }
      if (p.slot() == Layout.Slot.LONG) {
        long lo = r.lo() == Double.NEGATIVE_INFINITY ? Long.MIN_VALUE : (long) Math.ceil(r.lo());
        long hi = r.hi() == Double.POSITIVE_INFINITY ? Long.MAX_VALUE : (long) Math.floor(r.hi());
        if (lo > hi) {
          return new Compiled(new MatchNoDocsQuery(), samples, residuals, null, null, null);
        }
        b.add(LongPoint.newRangeQuery(Fields.point(column), lo, hi), BooleanClause.Occur.FILTER);
      } else if (doublePoints) {
        // Points order -0 before +0, while the condition's numbers treat them as equal: a bound at zero takes both.
        b.add(DoublePoint.newRangeQuery(Fields.point(column), r.lo() == 0 ? -0.0 : r.lo(),
            r.hi() == 0 ? 0.0 : r.hi()), BooleanClause.Occur.FILTER);
      } else {
        // Rounding to float is monotone, so x in [lo, hi] implies (float) x in [(float) lo, (float) hi]: the float
        // points find a superset (a few more events at the edges), the exact check on the binary form keeps the
        // events whose double value is in the range. Points order -0 before +0 while the condition treats them as
        // equal (x >= 0 holds for x = -0.0), so a bound that is a zero of either sign takes both zeros.
        float lo = (float) r.lo();
        float hi = (float) r.hi();
        b.add(FloatPoint.newRangeQuery(Fields.point(column), lo == 0 ? -0.0f : lo, hi == 0 ? 0.0f : hi),
            BooleanClause.Occur.FILTER);
        residuals.add(new Residual(p, null, r.lo(), r.hi()));
      }
      clauses++;
    }
    for (Selection.CategoryIn in : selection.categories()) {
      Manifest.Column c = manifest.column(in.column());
      if (c == null) {
        throw new IndexException(dir, "has no column '" + in.column() + "' (it has: " + columnNames() + ")");
      }
      if (c.kind() != ColumnKind.CATEGORY) {
        throw new IndexException(dir, "column '" + c.name() + "' is numeric: select it with a range");
      }
      List<BytesRef> values = in.values().stream().sorted().map(BytesRef::new).toList();
      b.add(new TermInSetQuery(Fields.category(c.name()), values), BooleanClause.Occur.FILTER);
      clauses++;
    }
    Query q = clauses == 0 ? new MatchAllDocsQuery() : b.build();
    if (selection.residual() == null) {
      return new Compiled(q, samples, residuals, null, null, null);
    }
    Map<String, Where.Kind> kinds = kinds();
    List<String> slots = new ArrayList<>();
    RowTest test = Where.compile(selection.residual(), kinds, name -> {
      int i = slots.indexOf(name);
      if (i < 0) {
        slots.add(name);
        i = slots.size() - 1;
      }
      return i;
    });
    ValueReader[] readers = new ValueReader[slots.size()];
    String[] categoryColumns = new String[slots.size()];
    for (int i = 0; i < slots.size(); i++) {
      if (kinds.get(slots.get(i)) == Where.Kind.CATEGORY) {
        categoryColumns[i] = slots.get(i);
      } else {
        readers[i] = valueReader(slots.get(i));
      }
    }
    return new Compiled(q, samples, residuals, test, readers, categoryColumns);
  }

  /** Per-event work on the binary form at {@code bytes[base …]}. */
  @FunctionalInterface
  private interface EventVisitor {
    void visit(byte[] bytes, int base) throws IOException;
  }

  /** Creates a segment's visitor and returns its partial result. */
  private interface LeafTask<R> {
    /** The segment's partial result, filled by the visitor. */
    R start(LeafReaderContext leaf) throws IOException;

    /** The visitor that fills the result. */
    EventVisitor visitor(R partial);
  }

  /** Runs a task over every segment in parallel; the results come back in segment order. */
  private <R> List<R> perLeaf(Selection selection, LeafTask<R> task) throws IOException {
    Compiled compiled = compile(selection);
    Query rewritten = searcher.rewrite(compiled.query());
    Weight weight = searcher.createWeight(rewritten, ScoreMode.COMPLETE_NO_SCORES, 1f);
    List<LeafReaderContext> leaves = reader.leaves();
    Object[] results = new Object[leaves.size()];
    IOException[] failure = new IOException[1];
    IntStream.range(0, leaves.size()).parallel().forEach(i -> {
      triage.core.Cancellation.check();
      try {
        LeafReaderContext leaf = leaves.get(i);
        R partial = task.start(leaf);
        results[i] = partial;
        Scorer scorer = weight.scorer(leaf);
        if (scorer == null) {
          return;
        }
        DocIdSetIterator it = scorer.iterator();
        BinaryDocValues events = DocValues.getBinary(leaf.reader(), Fields.EVENT);
        Bits live = leaf.reader().getLiveDocs();
        EventVisitor visitor = task.visitor(partial);
        EventSource source = new EventSource(compiled);
        for (int doc = it.nextDoc(); doc != DocIdSetIterator.NO_MORE_DOCS; doc = it.nextDoc()) {
          if (live != null && !live.get(doc)) {
            continue;
          }
          if (!events.advanceExact(doc)) {
            throw new CorruptIndexException("event without its binary form", "segment " + leaf.ord);
          }
          BytesRef v = events.binaryValue();
          if (compiled.holds(v.bytes, v.offset, source)) {
            visitor.visit(v.bytes, v.offset);
          }
        }
      } catch (IOException e) {
        synchronized (failure) {
          failure[0] = e;
        }
      }
    });
    if (failure[0] != null) {
      throw failure[0];
    }
    List<R> out = new ArrayList<>(results.length);
    for (Object r : results) {
      @SuppressWarnings("unchecked")
      R cast = (R) r;
      out.add(cast);
    }
    return out;
  }

  /** Per-sample partial sums of one segment. */
  private static final class Partial {
    final long[] counts;
    final NeumaierSum[] sumW;
    final NeumaierSum[] sumW2;
    final NeumaierSum[][] up;
    final NeumaierSum[][] down;

    Partial(int samples, int variations) {
      counts = new long[samples];
      sumW = new NeumaierSum[samples];
      sumW2 = new NeumaierSum[samples];
      up = new NeumaierSum[samples][variations];
      down = new NeumaierSum[samples][variations];
      for (int s = 0; s < samples; s++) {
        sumW[s] = new NeumaierSum();
        sumW2[s] = new NeumaierSum();
        for (int j = 0; j < variations; j++) {
          up[s][j] = new NeumaierSum();
          down[s][j] = new NeumaierSum();
        }
      }
    }
  }

  @Override
  public List<SampleSums> sums(Selection selection) throws IOException {
    List<Manifest.Sample> samples = manifest.samples();
    int nv = layout.variations;
    int variationAt = layout.variationAt;
    List<Partial> partials = perLeaf(selection, new LeafTask<Partial>() {
      @Override
      public Partial start(LeafReaderContext leaf) {
        return new Partial(samples.size(), nv);
      }

      @Override
      public EventVisitor visitor(Partial p) {
        return (b, base) -> {
          int s = Layout.getInt(b, base + Layout.SAMPLE);
          double w = Layout.getDouble(b, base + Layout.WEIGHT);
          p.counts[s]++;
          p.sumW[s].add(w);
          p.sumW2[s].add(w * w);
          for (int j = 0; j < nv; j++) {
            p.up[s][j].add(Layout.getDouble(b, base + variationAt + 16 * j));
            p.down[s][j].add(Layout.getDouble(b, base + variationAt + 16 * j + 8));
          }
        };
      }
    });
    List<SampleSums> out = new ArrayList<>();
    for (int s = 0; s < samples.size(); s++) {
      long count = 0;
      NeumaierSum w = new NeumaierSum();
      NeumaierSum w2 = new NeumaierSum();
      boolean varied = samples.get(s).role().weighted();
      double[] upSums = new double[varied ? nv : 0];
      double[] downSums = new double[varied ? nv : 0];
      for (Partial p : partials) {
        count += p.counts[s];
        w.combine(p.sumW[s]);
        w2.combine(p.sumW2[s]);
      }
      for (int j = 0; j < upSums.length; j++) {
        NeumaierSum up = new NeumaierSum();
        NeumaierSum down = new NeumaierSum();
        for (Partial p : partials) {
          up.combine(p.up[s][j]);
          down.combine(p.down[s][j]);
        }
        upSums[j] = up.value();
        downSums[j] = down.value();
      }
      out.add(new SampleSums(samples.get(s).name(), count, w.value(), w2.value(), upSums, downSums));
    }
    return out;
  }

  /** Reads one column's value from an event's binary form. */
  @FunctionalInterface
  private interface ValueReader {
    double value(byte[] b, int base);
  }

  private ValueReader valueReader(String column) throws IOException {
    if (isScoreFile(column)) {
      double[] scores = scores(column.substring(SCORE_PREFIX.length()));
      return (b, base) -> scores[(int) Layout.getLong(b, base + Layout.ROW)];
    }
    Layout.Place p = place(resolveExternal(column));
    if (p.slot() == Layout.Slot.CODE) {
      throw new IndexException(dir, "column '" + column + "' holds categories, not numbers");
    }
    return (b, base) -> Layout.value(b, base, p);
  }

  /** Per-sample partial histogram of one segment. */
  private record PartialHistogram(long[][] counts, NeumaierSum[][] sumW, NeumaierSum[][] sumW2) {}

  @Override
  public List<Histogram> histogram(Selection selection, String column, int bins, double lo, double hi)
      throws IOException {
    if (bins < 1 || !(lo < hi) || !Double.isFinite(lo) || !Double.isFinite(hi)) {
      throw new IllegalArgumentException("histogram needs bins ≥ 1 and a finite range lo < hi, got " + bins
          + " bins on [" + lo + ", " + hi + ")");
    }
    List<Manifest.Sample> samples = manifest.samples();
    int ns = samples.size();
    ValueReader values = valueReader(column);
    List<PartialHistogram> partials = perLeaf(selection, new LeafTask<PartialHistogram>() {
      @Override
      public PartialHistogram start(LeafReaderContext leaf) {
        long[][] counts = new long[ns][bins + 2];
        NeumaierSum[][] sw = new NeumaierSum[ns][bins + 2];
        NeumaierSum[][] sw2 = new NeumaierSum[ns][bins + 2];
        for (int s = 0; s < ns; s++) {
          for (int i = 0; i < bins + 2; i++) {
            sw[s][i] = new NeumaierSum();
            sw2[s][i] = new NeumaierSum();
          }
        }
        return new PartialHistogram(counts, sw, sw2);
      }

      @Override
      public EventVisitor visitor(PartialHistogram p) {
        return (b, base) -> {
          int s = Layout.getInt(b, base + Layout.SAMPLE);
          double w = Layout.getDouble(b, base + Layout.WEIGHT);
          int bin = Histogram.binOf(values.value(b, base), bins, lo, hi);
          if (bin < 0) {
            return;
          }
          p.counts()[s][bin]++;
          p.sumW()[s][bin].add(w);
          p.sumW2()[s][bin].add(w * w);
        };
      }
    });
    List<Histogram> out = new ArrayList<>();
    for (int s = 0; s < ns; s++) {
      long[] counts = new long[bins + 2];
      double[] sw = new double[bins + 2];
      double[] sw2 = new double[bins + 2];
      for (int i = 0; i < bins + 2; i++) {
        NeumaierSum a = new NeumaierSum();
        NeumaierSum c = new NeumaierSum();
        for (PartialHistogram p : partials) {
          counts[i] += p.counts()[s][i];
          a.combine(p.sumW()[s][i]);
          c.combine(p.sumW2()[s][i]);
        }
        sw[i] = a.value();
        sw2[i] = c.value();
      }
      out.add(new Histogram(samples.get(s).name(), column, bins, lo, hi, counts, sw, sw2));
    }
    return out;
  }

  // ---------------------------------------------------------------- events and columns

  @Override
  public Optional<EventRecord> event(String sample, long id) throws IOException {
    int ordinal = sampleOrdinal(sample);
    var c = manifest.spec().columns();
    TopDocs top = searcher.search(LongPoint.newExactQuery(Fields.point(c.id()), id), 1000);
    byte[] found = null;
    List<LeafReaderContext> leaves = searcher.getIndexReader().leaves();
    for (ScoreDoc hit : top.scoreDocs) {
      // The binary form is read from the doc values (format 1 also stored it as a stored field, no longer read).
      LeafReaderContext leaf = leaves.get(ReaderUtil.subIndex(hit.doc, leaves));
      BinaryDocValues events = DocValues.getBinary(leaf.reader(), Fields.EVENT);
      if (!events.advanceExact(hit.doc - leaf.docBase)) {
        throw new IndexException(dir, "is damaged: an event of id " + id + " has no binary form");
      }
      byte[] b = BytesRef.deepCopyOf(events.binaryValue()).bytes;
      if (Layout.getInt(b, Layout.SAMPLE) == ordinal) {
        if (found != null) {
          throw new IndexException(dir, "is damaged: sample '" + sample + "' holds id " + id + " twice");
        }
        found = b;
      }
    }
    if (found == null) {
      return Optional.empty();
    }
    Manifest.Sample facts = manifest.samples().get(ordinal);
    Map<String, Double> numbers = new LinkedHashMap<>();
    for (Manifest.Column col : manifest.columns()) {
      if (col.kind() != ColumnKind.CATEGORY) {
        numbers.put(col.name(), Layout.value(found, 0, layout.place(col.name())));
      }
    }
    if (facts.role().weighted()) {
      for (var v : manifest.spec().variations()) {
        numbers.put(v.up(), Layout.value(found, 0, layout.place(v.up())));
        numbers.put(v.down(), Layout.value(found, 0, layout.place(v.down())));
      }
    }
    long row = Layout.getLong(found, Layout.ROW);
    for (Manifest.Model m : manifest.models()) {
      if (!"column".equals(m.source())) {
        numbers.put(SCORE_PREFIX + m.version(), scores(m.version())[(int) row]);
      }
    }
    Map<String, String> categories = new LinkedHashMap<>();
    for (String k : c.categories()) {
      int code = (int) Layout.value(found, 0, layout.place(k));
      categories.put(k, facts.categories().get(k).get(code));
    }
    return Optional.of(new EventRecord(sample, row, Layout.getLong(found, Layout.LINE),
        Layout.getDouble(found, Layout.WEIGHT), numbers, categories));
  }

  @Override
  public double[][] columns(String sample, List<String> columns) throws IOException {
    return readAll(sample, columns, null);
  }

  /**
   * Every row of a sample in row order, in one pass: the columns, and the weights into {@code weights} when it is
   * not null (sized to the sample's events).
   */
  private double[][] readAll(String sample, List<String> columns, double[] weights) throws IOException {
    Manifest.Sample facts = manifest.samples().get(sampleOrdinal(sample));
    if (facts.events() > Integer.MAX_VALUE - 8) {
      throw new IndexException(dir, "sample '" + sample + "' has more events than one array can hold");
    }
    int n = (int) facts.events();
    long first = facts.firstRow();
    double[][] out = new double[columns.size()][n];
    ValueReader[] readers = new ValueReader[columns.size()];
    for (int k = 0; k < readers.length; k++) {
      readers[k] = valueReader(columns.get(k));
    }
    scanSample(sample, (b, base) -> {
          int i = (int) (Layout.getLong(b, base + Layout.ROW) - first);
          for (int k = 0; k < readers.length; k++) {
            out[k][i] = readers[k].value(b, base);
          }
          if (weights != null) {
            weights[i] = Layout.getDouble(b, base + Layout.WEIGHT);
          }
        });
    return out;
  }

  /**
   * Visits every event of a sample (segments in parallel; each event once, so visitors may write to distinct array
   * slots without locks).
   */
  private void scanSample(String sample, EventVisitor visitor) throws IOException {
    perLeaf(Selection.all().inSamples(Set.of(sample)), new LeafTask<Object>() {
      @Override
      public Object start(LeafReaderContext leaf) {
        return Boolean.TRUE;
      }

      @Override
      public EventVisitor visitor(Object unused) {
        return visitor;
      }
    });
  }

  @Override
  public EventStore.SelectedRows rows(String sample, List<String> columns, Selection selection) throws IOException {
    Manifest.Sample facts = manifest.samples().get(sampleOrdinal(sample));
    long first = facts.firstRow();
    if (selection.ranges().isEmpty() && selection.categories().isEmpty() && selection.residual() == null) {
      // no condition: every row in one pass, no mask (a row's place is its row number)
      double[] w = new double[(int) Math.min(facts.events(), Integer.MAX_VALUE - 8)];
      return new EventStore.SelectedRows(readAll(sample, columns, w), w);
    }
    java.util.BitSet kept = mask(selection, sample);
    // Rank of a row among the kept ones: popcounts before each 64-bit word, then within the word.
    long[] words = kept.toLongArray();
    int[] before = new int[words.length + 1];
    for (int k = 0; k < words.length; k++) {
      before[k + 1] = before[k] + Long.bitCount(words[k]);
    }
    int count = before[words.length];
    double[][] out = new double[columns.size()][count];
    double[] w = new double[count];
    ValueReader[] readers = new ValueReader[columns.size()];
    for (int k = 0; k < readers.length; k++) {
      readers[k] = valueReader(columns.get(k));
    }
    perLeaf(selection.inSamples(Set.of(sample)), new LeafTask<Object>() {
      @Override
      public Object start(LeafReaderContext leaf) {
        return Boolean.TRUE;
      }

      @Override
      public EventVisitor visitor(Object unused) {
        return (b, base) -> {
          int i = (int) (Layout.getLong(b, base + Layout.ROW) - first);
          int j = before[i >>> 6] + Long.bitCount(words[i >>> 6] & ((1L << (i & 63)) - 1));
          for (int k = 0; k < readers.length; k++) {
            out[k][j] = readers[k].value(b, base);
          }
          w[j] = Layout.getDouble(b, base + Layout.WEIGHT);
        };
      }
    });
    return new EventStore.SelectedRows(out, w);
  }

  @Override
  public java.util.BitSet mask(Selection selection, String sample) throws IOException {
    Manifest.Sample facts = manifest.samples().get(sampleOrdinal(sample));
    long first = facts.firstRow();
    List<java.util.BitSet> parts = perLeaf(selection.inSamples(Set.of(sample)),
        new LeafTask<java.util.BitSet>() {
          @Override
          public java.util.BitSet start(LeafReaderContext leaf) {
            return new java.util.BitSet();
          }

          @Override
          public EventVisitor visitor(java.util.BitSet bits) {
            return (b, base) -> bits.set((int) (Layout.getLong(b, base + Layout.ROW) - first));
          }
        });
    java.util.BitSet all = new java.util.BitSet((int) facts.events());
    for (java.util.BitSet p : parts) {
      all.or(p);
    }
    return all;
  }

  @Override
  public String[] categories(String sample, String column) throws IOException {
    Manifest.Sample facts = manifest.samples().get(sampleOrdinal(sample));
    Manifest.Column c = manifest.column(column);
    if (c == null || c.kind() != ColumnKind.CATEGORY) {
      throw new IndexException(dir, "has no category column '" + column + "'");
    }
    List<String> values = facts.categories().get(column);
    int offset = layout.place(column).offset();
    long first = facts.firstRow();
    String[] out = new String[(int) facts.events()];
    scanSample(sample, (b, base) -> out[(int) (Layout.getLong(b, base + Layout.ROW) - first)] =
            values.get(Layout.getInt(b, base + offset)));
    return out;
  }

  @Override
  public double[] weights(String sample) throws IOException {
    Manifest.Sample facts = manifest.samples().get(sampleOrdinal(sample));
    long first = facts.firstRow();
    double[] out = new double[(int) facts.events()];
    scanSample(sample, (b, base) -> out[(int) (Layout.getLong(b, base + Layout.ROW) - first)] =
            Layout.getDouble(b, base + Layout.WEIGHT));
    return out;
  }

  // ---------------------------------------------------------------- scores

  private static void checkVersion(String version) {
    String problem = Manifest.versionNameProblem(version);
    if (problem != null) {
      throw new IllegalArgumentException(problem);
    }
  }

  @Override
  public synchronized Manifest addScores(String version, double[] scoresByRow, String modelJson)
      throws IOException {
    checkVersion(version);
    long total = manifest.totalEvents();
    if (scoresByRow.length != total) {
      throw new IllegalArgumentException(scoresByRow.length + " scores given for " + total + " events");
    }
    IndexWriterConfig config = new IndexWriterConfig();
    config.setOpenMode(IndexWriterConfig.OpenMode.APPEND);
    config.setCommitOnClose(false);
    // This commit adds no document: it must not merge either. With Lucene's default policy a commit merges small
    // segments (up to 500 ms), which would rewrite a format-2 index's segments in this version's codec while its
    // manifest still says format 2, so the version that wrote it could no longer open it.
    config.setMergePolicy(NoMergePolicy.INSTANCE);
    Manifest updated;
    // Everything below holds the index's write lock, and starts from the latest commit's manifest: another process
    // may have added a model since this store was opened, and its model must not be lost.
    try (IndexWriter writer = new IndexWriter(directory, config)) {
      String json = SegmentInfos.readLatestCommit(directory).getUserData().get(Fields.MANIFEST_KEY);
      Manifest latest = json == null ? manifest : Manifest.fromJson(json);
      if (latest.model(version) != null) {
        throw new IndexException(dir, "already has a model version '" + version + "' (added "
            + latest.model(version).created() + "); choose another version name");
      }
      Path scoreDir = dir.resolve("scores");
      Files.createDirectories(scoreDir);
      Path scoreFile = scoreDir.resolve(version + ".f64");
      ByteBuffer buffer = ByteBuffer.allocate(SCORE_HEADER + 8 * scoresByRow.length)
          .order(ByteOrder.LITTLE_ENDIAN);
      buffer.putInt(SCORE_MAGIC).putInt(SCORE_FORMAT).putLong(scoresByRow.length);
      buffer.asDoubleBuffer().put(scoresByRow);
      byte[] bytes = buffer.array();
      writeAtomically(scoreFile, bytes);
      String modelFile = null;
      if (modelJson != null) {
        Path models = dir.resolve("models");
        Files.createDirectories(models);
        writeAtomically(models.resolve(version + ".json"), modelJson.getBytes(StandardCharsets.UTF_8));
        modelFile = "models/" + version + ".json";
      }
      updated = latest.withModel(new Manifest.Model(version, "file", "scores/" + version + ".f64",
          Fingerprints.sha256(bytes), modelFile, Instant.now().truncatedTo(ChronoUnit.SECONDS).toString()));
      writer.setLiveCommitData(Map.of(Fields.MANIFEST_KEY, updated.toJson()).entrySet());
      writer.commit();
    } catch (LockObtainFailedException e) {
      throw new IndexException(dir, "is in use by another ingest or fit (its write lock is held)", e);
    } catch (IllegalArgumentException e) {
      throw unknownCodecOr(dir, e, "add models with the version of triage that wrote it");
    }
    writeManifestCopy(dir, updated);
    manifest = updated;
    scoreCache.put(version, scoresByRow.clone());
    return updated;
  }

  @Override
  public double[] scores(String version) throws IOException {
    double[] cached = scoreCache.get(version);
    if (cached != null) {
      return cached;
    }
    Manifest.Model m = manifest.model(version);
    if (m == null || m.scoreFile() == null) {
      throw new IndexException(dir, "has no score file for model version '" + version + "'");
    }
    Path file = dir.resolve(m.scoreFile());
    byte[] bytes;
    try {
      bytes = Files.readAllBytes(file);
    } catch (NoSuchFileException e) {
      throw new IndexException(dir, "is damaged: score file " + m.scoreFile() + " is missing", e);
    }
    if (!Fingerprints.sha256(bytes).equals(m.sha256())) {
      throw new IndexException(dir, "is damaged: score file " + m.scoreFile() + " does not match its fingerprint");
    }
    ByteBuffer b = ByteBuffer.wrap(bytes).order(ByteOrder.LITTLE_ENDIAN);
    if (bytes.length < SCORE_HEADER || b.getInt() != SCORE_MAGIC || b.getInt() != SCORE_FORMAT
        || b.getLong() != manifest.totalEvents() || bytes.length != SCORE_HEADER + 8 * manifest.totalEvents()) {
      throw new IndexException(dir, "is damaged: score file " + m.scoreFile() + " has a bad header or length");
    }
    double[] scores = new double[(int) manifest.totalEvents()];
    b.asDoubleBuffer().get(scores);
    scoreCache.put(version, scores);
    return scores;
  }

  /** Writes a file through a temporary sibling, forced to disk, then moved into place atomically. */
  static void writeAtomically(Path target, byte[] bytes) throws IOException {
    Path tmp = target.resolveSibling(target.getFileName() + ".tmp");
    try (FileChannel ch = FileChannel.open(tmp, StandardOpenOption.CREATE, StandardOpenOption.TRUNCATE_EXISTING,
        StandardOpenOption.WRITE); OutputStream out = java.nio.channels.Channels.newOutputStream(ch)) {
      out.write(bytes);
      out.flush();
      ch.force(true);
    }
    Files.move(tmp, target, StandardCopyOption.ATOMIC_MOVE, StandardCopyOption.REPLACE_EXISTING);
  }

  /** Writes {@code manifest.json}, a readable copy of the manifest held in the commit. */
  static void writeManifestCopy(Path dir, Manifest manifest) throws IOException {
    writeAtomically(dir.resolve("manifest.json"), manifest.toJson().getBytes(StandardCharsets.UTF_8));
  }

  /**
   * Removes score and model files that the manifest does not reference, and the toys of model versions it does
   * not hold (left by a replaced index).
   */
  static void removeStaleSideFiles(Path dir, Manifest manifest) throws IOException {
    Set<String> keep = new HashSet<>();
    Set<String> versions = new HashSet<>();
    for (Manifest.Model m : manifest.models()) {
      versions.add(m.version());
      if (m.scoreFile() != null) {
        keep.add(m.scoreFile());
      }
      if (m.modelFile() != null) {
        keep.add(m.modelFile());
      }
    }
    for (String sub : List.of("scores", "models")) {
      Path folder = dir.resolve(sub);
      if (!Files.isDirectory(folder)) {
        continue;
      }
      try (DirectoryStream<Path> files = Files.newDirectoryStream(folder)) {
        for (Path f : files) {
          if (!keep.contains(sub + "/" + f.getFileName())) {
            Files.deleteIfExists(f);
          }
        }
      }
    }
    Path toys = dir.resolve("toys");
    if (Files.isDirectory(toys)) {
      try (DirectoryStream<Path> folders = Files.newDirectoryStream(toys, Files::isDirectory)) {
        for (Path f : folders) {
          if (!versions.contains(f.getFileName().toString())) {
            try (var tree = Files.walk(f)) {
              for (Path p : tree.sorted(java.util.Comparator.reverseOrder()).toList()) {
                Files.deleteIfExists(p);
              }
            }
          }
        }
      }
    }
  }
}
