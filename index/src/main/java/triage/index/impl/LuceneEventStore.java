package triage.index.impl;

import com.fasterxml.jackson.core.JsonProcessingException;
import java.io.EOFException;
import java.io.IOException;
import java.io.OutputStream;
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
import java.util.HashMap;
import java.util.HashSet;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.concurrent.ConcurrentHashMap;
import java.util.stream.IntStream;
import org.apache.lucene.document.DoubleField;
import org.apache.lucene.document.IntField;
import org.apache.lucene.document.KeywordField;
import org.apache.lucene.document.LongField;
import org.apache.lucene.index.CorruptIndexException;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.DocValues;
import org.apache.lucene.index.IndexFormatTooNewException;
import org.apache.lucene.index.IndexFormatTooOldException;
import org.apache.lucene.index.IndexNotFoundException;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.LeafReader;
import org.apache.lucene.index.LeafReaderContext;
import org.apache.lucene.index.NumericDocValues;
import org.apache.lucene.index.SortedNumericDocValues;
import org.apache.lucene.search.BooleanClause;
import org.apache.lucene.search.BooleanQuery;
import org.apache.lucene.search.DocIdSetIterator;
import org.apache.lucene.search.IndexSearcher;
import org.apache.lucene.search.MatchAllDocsQuery;
import org.apache.lucene.search.Query;
import org.apache.lucene.search.ScoreDoc;
import org.apache.lucene.search.ScoreMode;
import org.apache.lucene.search.Scorer;
import org.apache.lucene.search.TopDocs;
import org.apache.lucene.search.Weight;
import org.apache.lucene.store.FSDirectory;
import org.apache.lucene.store.LockObtainFailedException;
import org.apache.lucene.util.Bits;
import org.apache.lucene.util.BytesRef;
import org.apache.lucene.util.NumericUtils;
import triage.core.provenance.Fingerprints;
import triage.core.sample.Role;
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
 * <p>Selections become a conjunction of point range queries (Lucene picks points or doc values per clause);
 * sums and histograms read doc values of the matching documents segment by segment, in parallel, and combine the
 * per-segment results in segment order, so results do not depend on the thread count. Ranges on model scores
 * (columns {@code score:VERSION}) are checked per document against the score file.
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

  /** Loaded score arrays by version. */
  private final Map<String, double[]> scoreCache = new ConcurrentHashMap<>();

  private LuceneEventStore(Path dir, FSDirectory directory, DirectoryReader reader, Manifest manifest) {
    this.dir = dir;
    this.directory = directory;
    this.reader = reader;
    this.searcher = new IndexSearcher(reader);
    this.manifest = manifest;
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
      throw new IndexException(dir, "is damaged (" + e.getMessage() + "); ingest it again with --replace", e);
    } catch (IndexFormatTooNewException | IndexFormatTooOldException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "was written in a storage format this version cannot read ("
          + e.getMessage() + ")", e);
    } catch (AccessDeniedException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "cannot be read: permission denied", e);
    } catch (IOException e) {
      closeQuietly(reader, directory);
      throw new IndexException(dir, "cannot be opened: " + e, e);
    }
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

  /** The compiled form of a selection: a Lucene query plus ranges on score files. */
  private record Compiled(Query query, List<double[]> scoreArrays, List<Selection.Range> scoreRanges) {
    boolean residualHolds(long row) {
      for (int i = 0; i < scoreRanges.size(); i++) {
        if (!scoreRanges.get(i).contains(scoreArrays.get(i)[(int) row])) {
          return false;
        }
      }
      return true;
    }
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

  private Manifest.Column column(String name) {
    Manifest.Column c = manifest.column(name);
    if (c == null) {
      List<String> names = new ArrayList<>(manifest.columns().stream().map(Manifest.Column::name).toList());
      for (Manifest.Model m : manifest.models()) {
        names.add(SCORE_PREFIX + m.version());
      }
      throw new IndexException(dir, "has no column '" + name + "' (it has: " + String.join(", ", names) + ")");
    }
    return c;
  }

  private Compiled compile(Selection selection) throws IOException {
    BooleanQuery.Builder b = new BooleanQuery.Builder();
    int clauses = 0;
    if (!selection.samples().isEmpty()) {
      int[] ordinals = selection.samples().stream().mapToInt(this::sampleOrdinal).sorted().toArray();
      b.add(IntField.newSetQuery(Fields.SAMPLE, ordinals), BooleanClause.Occur.FILTER);
      clauses++;
    }
    List<double[]> arrays = new ArrayList<>();
    List<Selection.Range> scoreRanges = new ArrayList<>();
    for (Selection.Range r : selection.ranges()) {
      if (r.column().startsWith(SCORE_PREFIX) && manifest.column(r.column()) == null) {
        double[] scores = scoresOrColumn(r.column().substring(SCORE_PREFIX.length()));
        if (scores != null) {
          arrays.add(scores);
          scoreRanges.add(r);
          continue;
        }
        b.add(DoubleField.newRangeQuery(Fields.number(manifest.spec().columns().score()), r.lo(), r.hi()),
            BooleanClause.Occur.FILTER);
        clauses++;
        continue;
      }
      Manifest.Column c = column(r.column());
      if (!c.kind().numeric()) {
        throw new IndexException(dir, "column '" + c.name() + "' holds categories: select it with a set of values");
      }
      if (c.kind().integral()) {
        long lo = r.lo() == Double.NEGATIVE_INFINITY ? Long.MIN_VALUE : (long) Math.ceil(r.lo());
        long hi = r.hi() == Double.POSITIVE_INFINITY ? Long.MAX_VALUE : (long) Math.floor(r.hi());
        if (lo > hi) {
          return new Compiled(new BooleanQuery.Builder().build(), arrays, scoreRanges);
        }
        b.add(LongField.newRangeQuery(Fields.integer(c.name()), lo, hi), BooleanClause.Occur.FILTER);
      } else {
        b.add(DoubleField.newRangeQuery(Fields.number(c.name()), r.lo(), r.hi()), BooleanClause.Occur.FILTER);
      }
      clauses++;
    }
    for (Selection.CategoryIn in : selection.categories()) {
      Manifest.Column c = column(in.column());
      if (c.kind() != ColumnKind.CATEGORY) {
        throw new IndexException(dir, "column '" + c.name() + "' is numeric: select it with a range");
      }
      List<BytesRef> values = in.values().stream().sorted().map(BytesRef::new).toList();
      b.add(KeywordField.newSetQuery(Fields.category(c.name()), values), BooleanClause.Occur.FILTER);
      clauses++;
    }
    Query q = clauses == 0 ? new MatchAllDocsQuery() : b.build();
    return new Compiled(q, arrays, scoreRanges);
  }

  /** Scores of a file-backed model, or null for the external score column. */
  private double[] scoresOrColumn(String version) throws IOException {
    Manifest.Model m = manifest.model(version);
    if (m == null) {
      throw new IndexException(dir, "has no model version '" + version + "'");
    }
    return "column".equals(m.source()) ? null : scores(version);
  }

  /** Per-segment work: one call per matching document. */
  @FunctionalInterface
  private interface DocVisitor {
    void visit(int doc) throws IOException;
  }

  /** Creates a per-segment visitor and its partial result. */
  @FunctionalInterface
  private interface LeafTask<R> {
    R run(LeafReaderContext leaf, DocIdSetIterator matches, NumericDocValues rows, Compiled compiled)
        throws IOException;
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
      try {
        LeafReaderContext leaf = leaves.get(i);
        Scorer scorer = weight.scorer(leaf);
        DocIdSetIterator it = scorer == null ? DocIdSetIterator.empty() : scorer.iterator();
        NumericDocValues rows = compiled.scoreRanges().isEmpty() ? null
            : DocValues.getNumeric(leaf.reader(), Fields.ROW);
        results[i] = task.run(leaf, it, rows, compiled);
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

  /** Iterates matching live documents that pass the score ranges. */
  private static void forEach(LeafReaderContext leaf, DocIdSetIterator it, NumericDocValues rows,
      Compiled compiled, DocVisitor visitor) throws IOException {
    Bits live = leaf.reader().getLiveDocs();
    for (int doc = it.nextDoc(); doc != DocIdSetIterator.NO_MORE_DOCS; doc = it.nextDoc()) {
      if (live != null && !live.get(doc)) {
        continue;
      }
      if (rows != null) {
        if (!rows.advanceExact(doc)) {
          throw new CorruptIndexException("document without a row number", "segment " + leaf.ord);
        }
        if (!compiled.residualHolds(rows.longValue())) {
          continue;
        }
      }
      visitor.visit(doc);
    }
  }

  private static NumericDocValues singleValued(LeafReader r, String field) throws IOException {
    SortedNumericDocValues sorted = DocValues.getSortedNumeric(r, field);
    NumericDocValues single = DocValues.unwrapSingleton(sorted);
    if (single == null) {
      throw new CorruptIndexException("field " + field + " has several values per event", r.toString());
    }
    return single;
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
    int nv = manifest.spec().variations().size();
    List<String> variationNames = manifest.spec().variations().stream().map(v -> v.name()).toList();
    List<Partial> partials = perLeaf(selection, (leaf, it, rows, compiled) -> {
      Partial p = new Partial(samples.size(), nv);
      LeafReader r = leaf.reader();
      NumericDocValues sample = singleValued(r, Fields.SAMPLE);
      NumericDocValues weight = DocValues.getNumeric(r, Fields.WEIGHT);
      NumericDocValues[] ups = new NumericDocValues[nv];
      NumericDocValues[] downs = new NumericDocValues[nv];
      for (int j = 0; j < nv; j++) {
        ups[j] = DocValues.getNumeric(r, Fields.up(variationNames.get(j)));
        downs[j] = DocValues.getNumeric(r, Fields.down(variationNames.get(j)));
      }
      forEach(leaf, it, rows, compiled, doc -> {
        int s = sample.advanceExact(doc) ? (int) sample.longValue() : -1;
        double w = weight.advanceExact(doc) ? Double.longBitsToDouble(weight.longValue()) : Double.NaN;
        p.counts[s]++;
        p.sumW[s].add(w);
        p.sumW2[s].add(w * w);
        for (int j = 0; j < nv; j++) {
          if (ups[j].advanceExact(doc)) {
            p.up[s][j].add(Double.longBitsToDouble(ups[j].longValue()));
          }
          if (downs[j].advanceExact(doc)) {
            p.down[s][j].add(Double.longBitsToDouble(downs[j].longValue()));
          }
        }
      });
      return p;
    });
    List<SampleSums> out = new ArrayList<>();
    for (int s = 0; s < samples.size(); s++) {
      long count = 0;
      NeumaierSum w = new NeumaierSum();
      NeumaierSum w2 = new NeumaierSum();
      boolean varied = samples.get(s).role().weighted();
      double[] upSums = new double[varied ? nv : 0];
      double[] downSums = new double[varied ? nv : 0];
      NeumaierSum[] up = new NeumaierSum[nv];
      NeumaierSum[] down = new NeumaierSum[nv];
      for (int j = 0; j < nv; j++) {
        up[j] = new NeumaierSum();
        down[j] = new NeumaierSum();
      }
      for (Partial p : partials) {
        count += p.counts[s];
        w.combine(p.sumW[s]);
        w2.combine(p.sumW2[s]);
        for (int j = 0; j < nv; j++) {
          up[j].combine(p.up[s][j]);
          down[j].combine(p.down[s][j]);
        }
      }
      for (int j = 0; j < upSums.length; j++) {
        upSums[j] = up[j].value();
        downSums[j] = down[j].value();
      }
      out.add(new SampleSums(samples.get(s).name(), count, w.value(), w2.value(), upSums, downSums));
    }
    return out;
  }

  /** Reads a numeric column's value per document. */
  @FunctionalInterface
  private interface ValueReader {
    /** The value, or NaN when the document has none. */
    double value(int doc) throws IOException;
  }

  private ValueReader valueReader(LeafReader r, String column, NumericDocValues rows) throws IOException {
    if (column.startsWith(SCORE_PREFIX) && manifest.column(column) == null) {
      double[] scores = scoresOrColumn(column.substring(SCORE_PREFIX.length()));
      if (scores == null) {
        return valueReader(r, manifest.spec().columns().score(), rows);
      }
      NumericDocValues rowValues = DocValues.getNumeric(r, Fields.ROW);
      return doc -> rowValues.advanceExact(doc) ? scores[(int) rowValues.longValue()] : Double.NaN;
    }
    Manifest.Column c = column(column);
    if (!c.kind().numeric()) {
      throw new IndexException(dir, "column '" + column + "' holds categories, not numbers");
    }
    if (c.kind().integral()) {
      NumericDocValues v = singleValued(r, Fields.integer(column));
      return doc -> v.advanceExact(doc) ? (double) v.longValue() : Double.NaN;
    }
    NumericDocValues v = singleValued(r, Fields.number(column));
    return doc -> v.advanceExact(doc) ? NumericUtils.sortableLongToDouble(v.longValue()) : Double.NaN;
  }

  /** Per-sample partial histogram of one segment. */
  private record PartialHistogram(long[][] counts, NeumaierSum[][] sumW, NeumaierSum[][] sumW2) {}

  @Override
  public List<Histogram> histogram(Selection selection, String column, int bins, double lo, double hi)
      throws IOException {
    if (bins < 1 || !(lo < hi) || !Double.isFinite(lo) || !Double.isFinite(hi)) {
      throw new IllegalArgumentException("histogram needs bins ≥ 1 and a finite range lo < hi, got " + bins + " bins on ["
          + lo + ", " + hi + ")");
    }
    List<Manifest.Sample> samples = manifest.samples();
    int ns = samples.size();
    List<PartialHistogram> partials = perLeaf(selection, (leaf, it, rows, compiled) -> {
      long[][] counts = new long[ns][bins + 2];
      NeumaierSum[][] sw = new NeumaierSum[ns][bins + 2];
      NeumaierSum[][] sw2 = new NeumaierSum[ns][bins + 2];
      for (int s = 0; s < ns; s++) {
        for (int i = 0; i < bins + 2; i++) {
          sw[s][i] = new NeumaierSum();
          sw2[s][i] = new NeumaierSum();
        }
      }
      LeafReader r = leaf.reader();
      NumericDocValues sample = singleValued(r, Fields.SAMPLE);
      NumericDocValues weight = DocValues.getNumeric(r, Fields.WEIGHT);
      ValueReader values = valueReader(r, column, rows);
      forEach(leaf, it, rows, compiled, doc -> {
        int s = sample.advanceExact(doc) ? (int) sample.longValue() : -1;
        double w = weight.advanceExact(doc) ? Double.longBitsToDouble(weight.longValue()) : Double.NaN;
        int bin = Histogram.binOf(values.value(doc), bins, lo, hi);
        counts[s][bin]++;
        sw[s][bin].add(w);
        sw2[s][bin].add(w * w);
      });
      return new PartialHistogram(counts, sw, sw2);
    });
    List<Histogram> out = new ArrayList<>();
    for (int s = 0; s < ns; s++) {
      long[] counts = new long[bins + 2];
      double[] sw = new double[bins + 2];
      double[] sw2 = new double[bins + 2];
      for (int i = 0; i < bins + 2; i++) {
        NeumaierSum a = new NeumaierSum();
        NeumaierSum b = new NeumaierSum();
        for (PartialHistogram p : partials) {
          counts[i] += p.counts()[s][i];
          a.combine(p.sumW()[s][i]);
          b.combine(p.sumW2()[s][i]);
        }
        sw[i] = a.value();
        sw2[i] = b.value();
      }
      out.add(new Histogram(samples.get(s).name(), column, bins, lo, hi, counts, sw, sw2));
    }
    return out;
  }

  // ---------------------------------------------------------------- events and columns

  @Override
  public Optional<EventRecord> event(String sample, long id) throws IOException {
    int ordinal = sampleOrdinal(sample);
    String idColumn = manifest.spec().columns().id();
    Query q = new BooleanQuery.Builder()
        .add(IntField.newExactQuery(Fields.SAMPLE, ordinal), BooleanClause.Occur.FILTER)
        .add(LongField.newExactQuery(Fields.integer(idColumn), id), BooleanClause.Occur.FILTER)
        .build();
    TopDocs top = searcher.search(q, 2);
    if (top.scoreDocs.length == 0) {
      return Optional.empty();
    }
    if (top.scoreDocs.length > 1) {
      throw new IndexException(dir, "is damaged: sample '" + sample + "' holds id " + id + " twice");
    }
    ScoreDoc hit = top.scoreDocs[0];
    BytesRef bytes = searcher.storedFields().document(hit.doc).getBinaryValue(Fields.EVENT);
    Manifest.Sample facts = manifest.samples().get(ordinal);
    var c = manifest.spec().columns();
    int nv = facts.role().weighted() ? manifest.spec().variations().size() : 0;
    EventCodec.Decoded d = EventCodec.decode(BytesRef.deepCopyOf(bytes).bytes, c.features().size(), nv,
        c.score() != null, c.categories().size());
    Map<String, Double> numbers = new LinkedHashMap<>();
    for (int k = 0; k < c.features().size(); k++) {
      numbers.put(c.features().get(k), d.features()[k]);
    }
    numbers.put(c.id(), (double) d.id());
    if (c.run() != null) {
      numbers.put(c.run(), (double) d.run());
    }
    if (c.block() != null) {
      numbers.put(c.block(), (double) d.block());
    }
    if (c.score() != null) {
      numbers.put(c.score(), d.score());
    }
    for (int j = 0; j < nv; j++) {
      var v = manifest.spec().variations().get(j);
      numbers.put(v.up(), d.ups()[j]);
      numbers.put(v.down(), d.downs()[j]);
    }
    NumericDocValues rowValues = DocValues.getNumeric(leafOf(hit.doc).reader(), Fields.ROW);
    int local = hit.doc - leafOf(hit.doc).docBase;
    long row = rowValues.advanceExact(local) ? rowValues.longValue() : -1;
    for (Manifest.Model m : manifest.models()) {
      if (!"column".equals(m.source())) {
        numbers.put(SCORE_PREFIX + m.version(), scores(m.version())[(int) row]);
      }
    }
    Map<String, String> categories = new LinkedHashMap<>();
    for (int k = 0; k < c.categories().size(); k++) {
      categories.put(c.categories().get(k), d.categories()[k]);
    }
    return Optional.of(new EventRecord(sample, row, d.line(), d.weight(), numbers, categories));
  }

  private LeafReaderContext leafOf(int doc) {
    List<LeafReaderContext> leaves = reader.leaves();
    return leaves.get(org.apache.lucene.index.ReaderUtil.subIndex(doc, leaves));
  }

  @Override
  public double[][] columns(String sample, List<String> columns) throws IOException {
    int ordinal = sampleOrdinal(sample);
    Manifest.Sample facts = manifest.samples().get(ordinal);
    if (facts.events() > Integer.MAX_VALUE - 8) {
      throw new IndexException(dir, "sample '" + sample + "' has more events than one array can hold");
    }
    int n = (int) facts.events();
    long first = facts.firstRow();
    double[][] out = new double[columns.size()][n];
    for (String c : columns) {
      if (!(c.startsWith(SCORE_PREFIX) && manifest.column(c) == null)) {
        column(c);
      }
    }
    Selection only = Selection.all().inSamples(Set.of(sample));
    perLeaf(only, (leaf, it, rows, compiled) -> {
      LeafReader r = leaf.reader();
      NumericDocValues rowValues = DocValues.getNumeric(r, Fields.ROW);
      ValueReader[] readers = new ValueReader[columns.size()];
      for (int k = 0; k < readers.length; k++) {
        readers[k] = valueReader(r, columns.get(k), rowValues);
      }
      NumericDocValues ownRows = DocValues.getNumeric(r, Fields.ROW);
      forEach(leaf, it, rows, compiled, doc -> {
        if (!ownRows.advanceExact(doc)) {
          throw new CorruptIndexException("document without a row number", "segment " + leaf.ord);
        }
        int i = (int) (ownRows.longValue() - first);
        for (int k = 0; k < readers.length; k++) {
          out[k][i] = readers[k].value(doc);
        }
      });
      return null;
    });
    return out;
  }

  @Override
  public double[] weights(String sample) throws IOException {
    int ordinal = sampleOrdinal(sample);
    Manifest.Sample facts = manifest.samples().get(ordinal);
    int n = (int) facts.events();
    long first = facts.firstRow();
    double[] out = new double[n];
    perLeaf(Selection.all().inSamples(Set.of(sample)), (leaf, it, rows, compiled) -> {
      NumericDocValues rowValues = DocValues.getNumeric(leaf.reader(), Fields.ROW);
      NumericDocValues weight = DocValues.getNumeric(leaf.reader(), Fields.WEIGHT);
      forEach(leaf, it, rows, compiled, doc -> {
        if (!rowValues.advanceExact(doc) || !weight.advanceExact(doc)) {
          throw new CorruptIndexException("document without row or weight", "segment " + leaf.ord);
        }
        out[(int) (rowValues.longValue() - first)] = Double.longBitsToDouble(weight.longValue());
      });
      return null;
    });
    return out;
  }

  // ---------------------------------------------------------------- scores

  private static void checkVersion(String version) {
    if (version == null || !version.matches("[A-Za-z0-9_.-]{1,64}") || version.equals("external")) {
      throw new IllegalArgumentException("model version '" + version
          + "' must be 1-64 letters, digits, '_', '.', '-' (and not 'external')");
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
    Path scoreDir = dir.resolve("scores");
    Files.createDirectories(scoreDir);
    Path scoreFile = scoreDir.resolve(version + ".f64");
    ByteBuffer buffer = ByteBuffer.allocate(SCORE_HEADER + 8 * scoresByRow.length).order(ByteOrder.LITTLE_ENDIAN);
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
    Manifest updated = manifest.withModel(new Manifest.Model(version, "file", "scores/" + version + ".f64",
        Fingerprints.sha256(bytes), modelFile, Instant.now().truncatedTo(ChronoUnit.SECONDS).toString()));
    IndexWriterConfig config = new IndexWriterConfig();
    config.setOpenMode(IndexWriterConfig.OpenMode.APPEND);
    config.setCommitOnClose(false);
    try (IndexWriter writer = new IndexWriter(directory, config)) {
      writer.setLiveCommitData(Map.of(Fields.MANIFEST_KEY, updated.toJson()).entrySet());
      writer.commit();
    } catch (LockObtainFailedException e) {
      throw new IndexException(dir, "is in use by another ingest or fit (its write lock is held)", e);
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

  /** Removes score and model files that the manifest does not reference (left by a replaced index). */
  static void removeStaleSideFiles(Path dir, Manifest manifest) throws IOException {
    Set<String> keep = new HashSet<>();
    for (Manifest.Model m : manifest.models()) {
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
  }

  /** Roles by sample name, for callers that format summaries. */
  public Map<String, Role> roles() {
    Map<String, Role> out = new HashMap<>();
    for (Manifest.Sample s : manifest.samples()) {
      out.put(s.name(), s.role());
    }
    return out;
  }
}
