package triage.shell.bench;

import java.lang.management.ManagementFactory;
import java.lang.management.MemoryMXBean;

/** Samples the heap in use every few milliseconds on a daemon thread and keeps the peak. */
final class HeapSampler implements AutoCloseable {
  /** The memory bean. */
  private final MemoryMXBean memory = ManagementFactory.getMemoryMXBean();

  /** The sampling thread. */
  private final Thread thread;

  /** The peak seen, bytes. */
  private volatile long peak;

  /** Whether to stop. */
  private volatile boolean stop;

  HeapSampler() {
    thread = new Thread(() -> {
      while (!stop) {
        long used = memory.getHeapMemoryUsage().getUsed();
        if (used > peak) {
          peak = used;
        }
        try {
          Thread.sleep(5);
        } catch (InterruptedException e) {
          return;
        }
      }
    }, "heap-sampler");
    thread.setDaemon(true);
    thread.start();
  }

  /** CPU time used by this process so far (every thread, the collector's too), seconds; NaN when unknown. */
  static double processCpuSeconds() {
    if (ManagementFactory.getOperatingSystemMXBean() instanceof com.sun.management.OperatingSystemMXBean os) {
      long ns = os.getProcessCpuTime();
      return ns < 0 ? Double.NaN : ns / 1e9;
    }
    return Double.NaN;
  }

  /** The peak heap in use so far, MiB. */
  double peakMiB() {
    return peak / (1024.0 * 1024.0);
  }

  @Override
  public void close() {
    stop = true;
    thread.interrupt();
  }
}
