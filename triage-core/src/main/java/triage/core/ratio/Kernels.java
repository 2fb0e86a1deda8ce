package triage.core.ratio;

/**
 * Selects the kernel for a {@link KernelChoice}. The vector kernel is instantiated by reflection
 * only when the module {@code jdk.incubator.vector} is in the boot layer (JVM started with
 * {@code --add-modules jdk.incubator.vector}); any linkage failure falls back to the scalar
 * kernel.
 */
final class Kernels {
  /** The vector kernel, or null when unavailable; resolved once. */
  private static final Kernel VECTOR = loadVector();

  private Kernels() {
  }

  /** Kernel for the choice (see {@link KernelChoice}). */
  static Kernel select(KernelChoice choice) {
    if (choice == KernelChoice.SCALAR || VECTOR == null) {
      return ScalarKernel.INSTANCE;
    }
    return VECTOR;
  }

  /** Whether {@link #warmUp} has run for the vector kernel. */
  private static volatile boolean warmed;

  /**
   * Runs the kernel on one small generated tile until the JIT has compiled it, once per JVM.
   * Without this the first full-size evaluations of the vector kernel run in the interpreter,
   * where every vector operation is boxed (measured: ≈ 4 s for the first evaluations of a
   * 200,000-event fit). Costs a fraction of a second; results are unaffected.
   */
  static void warmUp(Kernel kernel) {
    if (warmed || kernel != VECTOR) {
      return;
    }
    synchronized (Kernels.class) {
      if (warmed) {
        return;
      }
      for (Activation act : Activation.values()) {
        Architecture arch = new Architecture(2, java.util.List.of(5, 5), act);
        int n = Kernel.TILE;
        double[] x = new double[2 * n];
        double[] a = new double[n];
        double[] b = new double[n];
        for (int e = 0; e < n; e++) {
          x[e] = (e % 13) * 0.1 - 0.6;
          x[n + e] = (e % 7) * 0.2 - 0.6;
          a[e] = e % 10 == 0 ? 0.0 : 0.01;
          b[e] = e % 10 == 0 ? 1.0 : 0.0;
        }
        double[] theta = RatioTrainer.initialParameters(arch, 1L, 9.0);
        for (LossKind loss : LossKind.values()) {
          Batch batch = new Batch(arch, loss, n, x, a, b, 0.0);
          Batch.Workspace ws = new Batch.Workspace(arch);
          int reps = act == Activation.SIGMOID && loss == LossKind.EXTENDED_LIKELIHOOD ? 400 : 100;
          for (int r = 0; r < reps; r++) {
            kernel.accumulate(batch, theta, 0, n, ws);
          }
        }
      }
      warmed = true;
    }
  }

  /** Whether the vector kernel can be used in this JVM. */
  static boolean vectorAvailable() {
    return VECTOR != null;
  }

  private static Kernel loadVector() {
    if (ModuleLayer.boot().findModule("jdk.incubator.vector").isEmpty()) {
      return null;
    }
    try {
      return (Kernel) Class.forName("triage.core.ratio.VectorKernel")
          .getDeclaredConstructor().newInstance();
    } catch (ReflectiveOperationException | LinkageError | RuntimeException e) {
      return null;
    }
  }
}
