package triage.index.impl;

import java.io.BufferedWriter;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Instant;
import java.time.temporal.ChronoUnit;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.NoSuchElementException;
import java.util.UUID;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Semaphore;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicLong;
import java.util.concurrent.atomic.AtomicReference;
import java.util.function.Consumer;
import org.apache.commons.csv.CSVFormat;
import org.apache.commons.csv.CSVPrinter;
import org.apache.lucene.document.BinaryDocValuesField;
import org.apache.lucene.document.FloatPoint;
import org.apache.lucene.document.Field;
import org.apache.lucene.document.LongPoint;
import org.apache.lucene.document.StringField;
import org.apache.lucene.index.DirectoryReader;
import org.apache.lucene.index.IndexWriter;
import org.apache.lucene.index.IndexableField;
import org.apache.lucene.index.IndexWriterConfig;
import org.apache.lucene.index.NoMergePolicy;
import org.apache.lucene.store.FSDirectory;
import org.apache.lucene.store.LockObtainFailedException;
import org.apache.lucene.util.BytesRef;
import triage.core.provenance.ToolVersion;
import triage.core.sample.BadRowPolicy;
import triage.core.sample.Columns;
import triage.core.sample.EventBatch;
import triage.core.sample.EventFileReader;
import triage.core.sample.InputException;
import triage.core.sample.ReadResult;
import triage.core.sample.RejectSink;
import triage.core.sample.SampleSource;
import triage.core.sample.SampleSpec;
import triage.core.stats.NeumaierSum;
import triage.index.ColumnKind;
import triage.index.Ingest;
import triage.index.IngestReport;
import triage.index.IndexException;
import triage.index.Manifest;

/**
 * Writes a sample spec's files into a Lucene index and commits the manifest with the documents in one commit.
 *
 * <p>The reader thread parses and checks rows; indexing threads turn batches into documents and add them.
 * The writer opens in {@code CREATE} mode with commit-on-close off, so until the single final commit every
 * reader still sees the previous commit (or no index), whatever happens to this process.
 */
public final class LuceneIngest {
  private LuceneIngest() {
    // no instance
  }

  /** See {@link Ingest#run}. */
  public static IngestReport run(SampleSpec spec, Path dir, Ingest.Options options, Consumer<String> progress)
      throws IOException {
    long start = System.nanoTime();
    for (SampleSource s : spec.samples()) {
      if (!Files.isRegularFile(s.path())) {
        throw new InputException(s.path(), "file of sample '" + s.name() + "' not found");
      }
    }
    if (Files.exists(dir) && !Files.isDirectory(dir)) {
      throw new IndexException(dir, "is a file, not a folder for an index");
    }
    Files.createDirectories(dir);
    Path rejectsFile = options.rejectsFile() != null ? options.rejectsFile() : dir.resolve("rejects.csv");
    Rejects.checkWritable(rejectsFile);
    try (FSDirectory directory = FSDirectory.open(dir)) {
      if (DirectoryReader.indexExists(directory) && !options.replace()) {
        throw new IndexException(dir, "already holds an index; use --replace to overwrite it "
            + "(the old index stays readable until the new ingest has finished)");
      }
      IndexWriterConfig config = new IndexWriterConfig();
      config.setOpenMode(IndexWriterConfig.OpenMode.CREATE);
      config.setRAMBufferSizeMB(options.ramBufferMb());
      config.setCommitOnClose(false);
      // Each flushed segment is written once: no compound-file copy, no merging while ingesting (measured at 1e6
      // events: about 15% faster). Queries run segment by segment in parallel, so tens of segments serve them well.
      config.setUseCompoundFile(false);
      config.setMergePolicy(NoMergePolicy.INSTANCE);
      config.setCodec(new EventCodec());
      try (IndexWriter writer = new IndexWriter(directory, config);
          Rejects rejects = new Rejects(rejectsFile, options.read().badRows() == BadRowPolicy.SKIP)) {
        Writing writing = new Writing(spec, writer, options.threads());
        List<ReadResult> results = new ArrayList<>();
        List<Manifest.Sample> samples = new ArrayList<>();
        try {
          for (int ordinal = 0; ordinal < spec.samples().size(); ordinal++) {
            SampleSource source = spec.samples().get(ordinal);
            progress.accept("reading " + source.name() + " (" + source.role() + ") from " + source.file());
            long firstRow = writing.nextRow;
            SampleState state = writing.startSample(ordinal, source);
            ReadResult r = EventFileReader.read(spec, source, options.read(), state::accept,
                rejects.forSample(source.name()));
            writing.awaitQuiet();
            if (r.rowsAccepted() == 0) {
              throw new InputException(source.path(), "no event of sample '" + source.name()
                  + "' passed the checks (" + r.rowsRejected() + " rows rejected, listed in " + rejectsFile + ")");
            }
            if (state.added.get() != r.rowsAccepted()) {
              throw new IllegalStateException("sample " + source.name() + ": " + state.added.get()
                  + " events indexed but " + r.rowsAccepted() + " accepted");
            }
            results.add(r);
            samples.add(sampleFacts(spec, source, r, firstRow, state));
            progress.accept(String.format(java.util.Locale.ROOT, "  %d rows read, %d indexed, %d rejected",
                r.rowsRead(), r.rowsAccepted(), r.rowsRejected()));
          }
          writing.finish();
        } catch (IOException | RuntimeException e) {
          writing.abort();
          throw e;
        }
        long indexed = writer.getDocStats().numDocs;
        long accepted = results.stream().mapToLong(ReadResult::rowsAccepted).sum();
        if (indexed != accepted) {
          throw new IllegalStateException("index holds " + indexed + " events but " + accepted + " were accepted");
        }
        String indexId = UUID.randomUUID().toString();
        Manifest manifest = new Manifest(Manifest.FORMAT, indexId, "triage " + ToolVersion.get(),
            Instant.now().truncatedTo(ChronoUnit.SECONDS).toString(), spec, columnsOf(spec), samples,
            externalModel(spec));
        progress.accept("committing " + indexed + " events");
        writer.setLiveCommitData(Map.of(Fields.MANIFEST_KEY, manifest.toJson()).entrySet());
        writer.commit();
        long read = results.stream().mapToLong(ReadResult::rowsRead).sum();
        long rejected = results.stream().mapToLong(ReadResult::rowsRejected).sum();
        LuceneEventStore.writeManifestCopy(dir, manifest);
        LuceneEventStore.removeStaleSideFiles(dir, manifest);
        rejects.close();
        if (rejected == 0 && Files.exists(rejectsFile) && Files.size(rejectsFile) > 0
            && Rejects.isRejectsFile(rejectsFile)) {
          // an earlier ingest's rejects file (checked above): it no longer describes this index
          Files.delete(rejectsFile);
        }
        return new IngestReport(dir.toString(), indexId, results, read, indexed, rejected,
            rejected == 0 ? null : rejectsFile.toString(), (System.nanoTime() - start) / 1e9);
      }
    } catch (LockObtainFailedException e) {
      throw new IndexException(dir, "is in use by another ingest or fit (its write lock is held)", e);
    } catch (IllegalArgumentException e) {
      // --replace: the writer reads the commit it replaces
      throw LuceneEventStore.unknownCodecOr(dir, e, "remove the folder to ingest anew");
    }
  }

  /** The column list of the manifest, in a fixed order. */
  static List<Manifest.Column> columnsOf(SampleSpec spec) {
    Columns c = spec.columns();
    List<Manifest.Column> out = new ArrayList<>();
    for (String f : c.features()) {
      out.add(new Manifest.Column(f, ColumnKind.FEATURE));
    }
    out.add(new Manifest.Column(c.id(), ColumnKind.ID));
    if (c.run() != null) {
      out.add(new Manifest.Column(c.run(), ColumnKind.RUN));
    }
    if (c.block() != null) {
      out.add(new Manifest.Column(c.block(), ColumnKind.BLOCK));
    }
    for (String k : c.categories()) {
      out.add(new Manifest.Column(k, ColumnKind.CATEGORY));
    }
    if (c.score() != null) {
      out.add(new Manifest.Column(c.score(), ColumnKind.SCORE));
    }
    return out;
  }

  private static List<Manifest.Model> externalModel(SampleSpec spec) {
    if (spec.columns().score() == null) {
      return List.of();
    }
    return List.of(new Manifest.Model("external", "column", null, null, null,
        Instant.now().truncatedTo(ChronoUnit.SECONDS).toString()));
  }

  private static Manifest.Sample sampleFacts(SampleSpec spec, SampleSource source, ReadResult r, long firstRow,
      SampleState state) {
    Map<String, Double> means = new LinkedHashMap<>();
    Map<String, Double> sds = new LinkedHashMap<>();
    List<String> features = spec.columns().features();
    for (int k = 0; k < features.size(); k++) {
      means.put(features.get(k), r.featureMeans()[k]);
      sds.put(features.get(k), r.featureSds()[k]);
    }
    Map<String, List<String>> categories = new LinkedHashMap<>();
    List<String> names = spec.columns().categories();
    for (int k = 0; k < names.size(); k++) {
      categories.put(names.get(k), state.categoryValues == null ? List.of()
          : List.copyOf(state.categoryValues.get(k)));
    }
    Map<String, double[]> variationSums = new LinkedHashMap<>();
    if (source.role().weighted()) {
      for (int j = 0; j < spec.variations().size(); j++) {
        variationSums.put(spec.variations().get(j).name(),
            new double[] {state.upSums[j].value(), state.downSums[j].value()});
      }
    }
    return new Manifest.Sample(source.name(), source.role(), source.file(), r.sha256(), r.rowsRead(),
        r.rowsRejected(), r.rowsAccepted(), firstRow, r.sumOfWeights(), r.sumOfSquaredWeights(),
        r.negativeWeights(), r.zeroWeights(), means, sds, categories, variationSums);
  }

  /** Per-sample state kept by the reader thread. */
  private static final class SampleState {
    /** The sample's ordinal in the spec. */
    final int ordinal;

    /** Events handed to the writer. */
    final AtomicLong added = new AtomicLong();

    /** Σ w_up per variation. */
    final NeumaierSum[] upSums;

    /** Σ w_down per variation. */
    final NeumaierSum[] downSums;

    /** The reader's category dictionaries. */
    List<List<String>> categoryValues;

    /** The writing this belongs to. */
    final Writing writing;

    SampleState(int ordinal, int variations, Writing writing) {
      this.ordinal = ordinal;
      this.writing = writing;
      upSums = new NeumaierSum[variations];
      downSums = new NeumaierSum[variations];
      for (int j = 0; j < variations; j++) {
        upSums[j] = new NeumaierSum();
        downSums[j] = new NeumaierSum();
      }
    }

    void accept(EventBatch batch) throws IOException {
      if (categoryValues == null) {
        categoryValues = new ArrayList<>();
        for (int k = 0; k < batch.categoryCount(); k++) {
          categoryValues.add(batch.categoryValues(k));
        }
      }
      for (int i = 0; i < batch.size(); i++) {
        for (int j = 0; j < batch.variationCount(); j++) {
          upSums[j].add(batch.up(i, j));
          downSums[j].add(batch.down(i, j));
        }
      }
      writing.submit(this, batch.copy());
    }
  }

  /** Documents in flight to the writer. */
  private static final class Writing {
    /** The spec. */
    private final SampleSpec spec;

    /** The Lucene writer. */
    private final IndexWriter writer;

    /** Indexing threads. */
    private final ExecutorService pool;

    /** Bounds the batches in flight (memory). */
    private final Semaphore inFlight;

    /** Number of permits. */
    private final int permits;

    /** The first failure of an indexing thread. */
    private final AtomicReference<Throwable> failure = new AtomicReference<>();

    /** The next index-wide row number. */
    long nextRow;

    /** The binary form of events. */
    private final Layout layout;

    Writing(SampleSpec spec, IndexWriter writer, int threads) {
      this.spec = spec;
      this.layout = new Layout(spec);
      this.writer = writer;
      this.pool = Executors.newFixedThreadPool(threads, r -> {
        Thread t = new Thread(r, "triage-index");
        t.setDaemon(true);
        return t;
      });
      this.permits = threads * 2;
      this.inFlight = new Semaphore(permits);
    }

    SampleState startSample(int ordinal, SampleSource source) {
      int variations = source.role().weighted() ? spec.variations().size() : 0;
      return new SampleState(ordinal, variations, this);
    }

    void submit(SampleState state, EventBatch batch) throws IOException {
      rethrow();
      long firstRow = nextRow;
      nextRow += batch.size();
      onPool(() -> {
        writer.addDocuments(documents(state.ordinal, batch, firstRow));
        state.added.addAndGet(batch.size());
      });
    }

    /** Work for an indexing thread. */
    private interface Task {
      /** Runs the work. */
      void run() throws IOException;
    }

    /** Takes a permit (waiting while all are taken), runs the task on the pool, keeps its first failure. */
    private void onPool(Task task) throws IOException {
      try {
        inFlight.acquire();
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        throw new IOException("interrupted", e);
      }
      pool.execute(() -> {
        try {
          task.run();
        } catch (Throwable t) {
          failure.compareAndSet(null, t);
        } finally {
          inFlight.release();
        }
      });
    }

    /** Waits until every submitted batch is written. */
    void awaitQuiet() throws IOException {
      try {
        inFlight.acquire(permits);
        inFlight.release(permits);
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
        throw new IOException("interrupted", e);
      }
      rethrow();
    }

    /**
     * Waits for every batch, then writes the buffered events to segments on every indexing thread at once
     * ({@code flushNextBuffer} takes one buffer per call), so the commit that follows finds little left to write:
     * a commit flushes the buffers one after another on the calling thread, which left one core idle while the
     * last quarter of the work (the points build of the buffered events) was done.
     */
    void finish() throws IOException {
      awaitQuiet();
      for (int t = 0; t < permits / 2; t++) {
        onPool(() -> {
          while (writer.flushNextBuffer()) {
            // one buffer per call
          }
        });
      }
      awaitQuiet();
      pool.shutdown();
    }

    void abort() {
      pool.shutdownNow();
      try {
        pool.awaitTermination(30, TimeUnit.SECONDS);
      } catch (InterruptedException e) {
        Thread.currentThread().interrupt();
      }
    }

    private void rethrow() throws IOException {
      Throwable t = failure.get();
      if (t instanceof IOException io) {
        throw io;
      }
      if (t instanceof RuntimeException re) {
        throw re;
      }
      if (t != null) {
        throw new IOException("indexing failed", t);
      }
    }

    /**
     * The batch's events as documents, made one at a time as the writer asks for them: one set of field objects
     * is refilled for each event (Lucene has consumed an event's fields before it asks for the next one), so no
     * per-event field objects are made. The binary form is kept once, as binary doc values.
     */
    private Iterable<Iterable<IndexableField>> documents(int ordinal, EventBatch b, long firstRow) {
      Columns c = spec.columns();
      List<String> features = c.features();
      List<String> categories = c.categories();
      FloatPoint[] points = new FloatPoint[features.size()];
      List<IndexableField> fields = new ArrayList<>();
      for (int k = 0; k < points.length; k++) {
        points[k] = new FloatPoint(Fields.point(features.get(k)), 0f);
        fields.add(points[k]);
      }
      LongPoint id = new LongPoint(Fields.point(c.id()), 0L);
      fields.add(id);
      LongPoint run = b.hasRun() ? new LongPoint(Fields.point(c.run()), 0L) : null;
      if (run != null) {
        fields.add(run);
      }
      FloatPoint score = b.hasScore() ? new FloatPoint(Fields.point(c.score()), 0f) : null;
      if (score != null) {
        fields.add(score);
      }
      StringField[] labels = new StringField[categories.size()];
      for (int k = 0; k < labels.length; k++) {
        labels[k] = new StringField(Fields.category(categories.get(k)), "", Field.Store.NO);
        fields.add(labels[k]);
      }
      byte[] blob = new byte[layout.length];
      BinaryDocValuesField event = new BinaryDocValuesField(Fields.EVENT, new BytesRef(blob));
      fields.add(event);
      List<IndexableField> document = List.copyOf(fields);
      return () -> new Iterator<>() {
        private int i;

        @Override
        public boolean hasNext() {
          return i < b.size();
        }

        @Override
        public Iterable<IndexableField> next() {
          if (i >= b.size()) {
            throw new NoSuchElementException();
          }
          for (int k = 0; k < points.length; k++) {
            // Float points find candidates; selections check the exact double in the binary form.
            points[k].setFloatValue((float) b.feature(i, k));
          }
          id.setLongValue(b.id(i));
          if (run != null) {
            run.setLongValue(b.run(i));
          }
          if (score != null) {
            score.setFloatValue((float) b.score(i));
          }
          for (int k = 0; k < labels.length; k++) {
            labels[k].setStringValue(b.category(i, k));
          }
          // The writer copies the bytes when it takes the event, so one array serves every event.
          layout.encode(b, i, ordinal, firstRow + i, blob);
          i++;
          return document;
        }
      };
    }
  }

  /** The rejects file, opened on the first rejected row. */
  private static final class Rejects implements AutoCloseable {
    /** Where rejected rows go. */
    private final Path file;

    /** Whether rows may be rejected at all (skip policy). */
    private final boolean enabled;

    /** The printer, once opened. */
    private CSVPrinter printer;

    /** The header of a rejects file (also how an earlier rejects file is recognised). */
    static final String[] HEADER = {"sample", "file", "line", "column", "column_name", "problem", "found",
        "expected", "row"};

    /**
     * Refuses a rejects path that is a folder or a file that is not an earlier rejects file: an ingest overwrites or
     * removes only files it wrote (the path could be an input file, or anything else).
     */
    static void checkWritable(Path file) throws IOException {
      if (Files.isDirectory(file)) {
        throw new InputException(file, "is a folder; the rejects file must be a file path");
      }
      if (Files.exists(file) && Files.size(file) > 0 && !isRejectsFile(file)) {
        throw new InputException(file, "already exists and is not a rejects file written by triage; choose "
            + "another path for --rejects (triage does not overwrite or remove other files)");
      }
    }

    /** Whether a file starts with the rejects header. */
    static boolean isRejectsFile(Path file) throws IOException {
      try (var r = Files.newBufferedReader(file, StandardCharsets.UTF_8)) {
        return String.join(",", HEADER).equals(r.readLine());
      } catch (java.nio.charset.CharacterCodingException e) {
        return false;
      }
    }

    Rejects(Path file, boolean enabled) {
      this.file = file;
      this.enabled = enabled;
    }

    RejectSink forSample(String sample) {
      if (!enabled) {
        return null;
      }
      return (problem, fields) -> {
        if (printer == null) {
          Path parent = file.toAbsolutePath().getParent();
          if (parent != null) {
            Files.createDirectories(parent);
          }
          BufferedWriter w = Files.newBufferedWriter(file, StandardCharsets.UTF_8);
          printer = new CSVPrinter(w, CSVFormat.DEFAULT.builder().setHeader(HEADER).get());
        }
        printer.printRecord(sample, problem.file(), problem.line(), problem.column(),
            problem.columnName() == null ? "" : problem.columnName(), problem.kind().label(),
            problem.text() == null ? "" : problem.text(), problem.expected(), String.join(",", fields));
      };
    }

    @Override
    public void close() throws IOException {
      if (printer != null) {
        printer.close();
        printer = null;
      }
    }
  }
}
