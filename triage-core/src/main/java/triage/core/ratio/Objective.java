package triage.core.ratio;

import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.Callable;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicInteger;

/**
 * Full-batch loss and gradient over a {@link Batch}, multithreaded and deterministic.
 *
 * <p>Determinism scheme: the events are split into fixed chunks of {@link #CHUNK} events (the
 * last one shorter), a layout that depends on the event count only. Worker threads take chunks
 * from a shared counter in any order; each chunk's eight-lane accumulators are reduced lane 0..7
 * into a per-chunk partial (loss, gradient), and after all workers finish the partials are summed
 * in chunk order by the calling thread. The result is therefore bit-identical for every thread
 * count and every kernel.
 */
final class Objective implements DifferentiableFunction, AutoCloseable {
  /** Events per reduction chunk (a multiple of {@link Kernel#TILE}). */
  static final int CHUNK = 16 * Kernel.TILE;

  /** Events and coefficients. */
  private final Batch batch;
  /** Kernel used for every chunk. */
  private final Kernel kernel;
  /** Number of parameters. */
  private final int p;
  /** Number of chunks. */
  private final int chunks;
  /** Per-chunk partials: [chunk][0] loss, [chunk][1+q] gradient. */
  private final double[][] partials;
  /** One workspace per worker. */
  private final Batch.Workspace[] workspaces;
  /** Pool of the extra workers (the caller is worker 0), null with one thread. */
  private final ExecutorService pool;
  /** Tasks of workers 1..T−1. */
  private final List<Callable<Void>> tasks;
  /** Next chunk to take. */
  private final AtomicInteger next = new AtomicInteger();
  /** Parameters of the evaluation in progress. */
  private double[] current;
  /** Stored hidden-layer activations of the evaluation in progress (see {@link Kernel#accumulateFrom}), or null. */
  private double[][] currentActs;
  /** Work of the pass in progress, per chunk. */
  private ChunkTask task;
  /** The loss-and-gradient pass. */
  private final ChunkTask gradientTask = this::gradientChunk;
  /** Number of evaluations so far. */
  private long evaluations;

  Objective(Batch batch, Kernel kernel, int threads) {
    this.batch = batch;
    this.kernel = kernel;
    this.p = batch.arch.parameterCount();
    this.chunks = (batch.n + CHUNK - 1) / CHUNK;
    this.partials = new double[chunks][p + 1];
    int workers = Math.max(1, Math.min(threads, chunks));
    this.workspaces = new Batch.Workspace[workers];
    for (int i = 0; i < workers; i++) {
      workspaces[i] = new Batch.Workspace(batch.arch);
    }
    this.tasks = new ArrayList<>();
    for (int i = 1; i < workers; i++) {
      Batch.Workspace ws = workspaces[i];
      tasks.add(() -> {
        work(ws);
        return null;
      });
    }
    this.pool = workers > 1 ? Executors.newFixedThreadPool(workers - 1, r -> {
      Thread t = new Thread(r, "ratio-worker");
      t.setDaemon(true);
      return t;
    }) : null;
  }

  @Override
  public int dimension() {
    return p;
  }

  /** The batch evaluated. */
  Batch batch() {
    return batch;
  }

  /** Kernel name. */
  String kernelName() {
    return kernel.name();
  }

  /** Evaluations so far. */
  long evaluations() {
    return evaluations;
  }

  /** Work on one chunk of events [start, end), with the workspace of the worker that runs it. */
  @FunctionalInterface
  interface ChunkTask {
    /** Does the chunk's work. */
    void run(int chunk, int start, int end, Batch.Workspace ws);
  }

  /** Number of chunks of {@link #CHUNK} events. */
  int chunks() {
    return chunks;
  }

  /**
   * Runs {@code work} once for every chunk, on this objective's workers (chunks in any order, so the task must
   * write its results per chunk).
   */
  void forEachChunk(ChunkTask work) {
    task = work;
    next.set(0);
    if (pool == null) {
      work(workspaces[0]);
      return;
    }
    List<Future<Void>> futures = new ArrayList<>(tasks.size());
    for (Callable<Void> t : tasks) {
      futures.add(pool.submit(t));
    }
    work(workspaces[0]);
    try {
      for (Future<Void> f : futures) {
        f.get();
      }
    } catch (InterruptedException e) {
      Thread.currentThread().interrupt();
      throw new IllegalStateException("interrupted during evaluation", e);
    } catch (ExecutionException e) {
      throw new IllegalStateException("evaluation failed", e.getCause());
    }
  }

  /** The kernel in use. */
  Kernel kernel() {
    return kernel;
  }

  /**
   * {@link #valueAndGradient(double[], double[])} with every hidden layer's activations for θ already computed (by
   * {@link Kernel#hidden}): the same result, bit for bit, without the forward pass.
   */
  double valueAndGradient(double[] theta, double[][] acts, double[] gradient) {
    currentActs = acts;
    try {
      return valueAndGradient(theta, gradient);
    } finally {
      currentActs = null;
    }
  }

  @Override
  public double valueAndGradient(double[] theta, double[] gradient) {
    current = theta;
    forEachChunk(gradientTask);
    evaluations++;
    double loss = 0;
    for (int q = 0; q < p; q++) {
      gradient[q] = 0;
    }
    for (int c = 0; c < chunks; c++) {
      double[] part = partials[c];
      loss += part[0];
      for (int q = 0; q < p; q++) {
        gradient[q] += part[q + 1];
      }
    }
    return loss;
  }

  private void work(Batch.Workspace ws) {
    ChunkTask work = task;
    for (int c = next.getAndIncrement(); c < chunks; c = next.getAndIncrement()) {
      int start = c * CHUNK;
      work.run(c, start, Math.min(batch.n, start + CHUNK), ws);
    }
  }

  private void gradientChunk(int c, int start, int end, Batch.Workspace ws) {
    double[] lanes = ws.lanes;
    java.util.Arrays.fill(lanes, 0.0);
    if (currentActs == null) {
      kernel.accumulate(batch, current, start, end, ws);
    } else {
      kernel.accumulateFrom(batch, current, currentActs, start, end, ws);
    }
    Kernel.sumLanes(lanes, partials[c], p + 1);
  }

  @Override
  public void close() {
    if (pool != null) {
      pool.shutdownNow();
    }
  }
}
