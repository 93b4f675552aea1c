package org.backstep.internal.net;

import java.nio.FloatBuffer;

import org.bytedeco.javacpp.BytePointer;
import org.bytedeco.javacpp.FloatPointer;
import org.bytedeco.javacpp.Pointer;
import org.bytedeco.openblas.global.openblas_nolapack;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.memory.MemoryWorkspace;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The bridge to native memory and to the OpenBLAS that ND4J bundles: float views of ND4J buffers,
 * row-major {@code sgemm}, and the one-thread-per-call setting.
 *
 * <p>Threading: this package parallelizes across Java threads (independent batch shards) and runs
 * every BLAS call on the calling thread only. With the OpenBLAS 0.3.19 that ND4J 1.0.0-M2.1 bundles,
 * {@code openblas_set_num_threads(1)} acts on the thread that calls it (measured on this project's
 * 2-core machine: set once on the main thread, two other threads running sgemm at once got about
 * 25 GFLOP/s each; set on each of them, about 55 GFLOP/s each), so {@link #oneBlasThreadHere()} is
 * called at every entry point and sets it once for each thread. Other BLAS users on the same thread
 * then also get one thread. Process-wide settings and environment variables (OMP_NUM_THREADS,
 * OPENBLAS_CORETYPE) are never touched.
 */
final class NativeMath {

    private static final ThreadLocal<boolean[]> ONE_THREAD = ThreadLocal.withInitial(() -> new boolean[1]);

    private NativeMath() {
    }

    /** Sets OpenBLAS to one thread for BLAS calls made from the current thread (once per thread). */
    static void oneBlasThreadHere() {
        boolean[] done = ONE_THREAD.get();
        if (!done[0]) {
            org.bytedeco.openblas.presets.openblas_nolapack.blas_set_num_threads(1);
            done[0] = true;
        }
    }

    /**
     * Row-major {@code C = op(A) op(B) + beta C} with {@code op(A)} m x k, {@code op(B)} k x n,
     * C m x n (cblas_sgemm, alpha = 1).
     *
     * @param transA whether A is stored transposed (k x m)
     * @param transB whether B is stored transposed (n x k)
     * @param m rows of C
     * @param n columns of C
     * @param k inner dimension
     * @param a A (not modified)
     * @param lda leading dimension (row length) of A as stored
     * @param b B (not modified)
     * @param ldb leading dimension of B as stored
     * <p>With {@code beta = 0} and a dense C ({@code ldc = n}), C is first zeroed by {@code memset}
     * and the product accumulated into it with {@code beta = 1}: the same bits (0 + x = x), but
     * OpenBLAS's own beta pass, a scalar loop over C, took 5% of a training step's CPU time in a
     * profile of the 64-column step (perf, 2 threads), and {@code memset} is a fraction of that.
     *
     * @param beta 0 to overwrite C, 1 to accumulate into it
     * @param c C (modified)
     * @param ldc leading dimension of C
     */
    static void gemm(boolean transA, boolean transB, int m, int n, int k, FloatPointer a, int lda,
            FloatPointer b, int ldb, float beta, FloatPointer c, int ldc) {
        if (beta == 0f && ldc == n) {
            zero(c, (long) m * n);
            beta = 1f;
        }
        openblas_nolapack.cblas_sgemm(openblas_nolapack.CblasRowMajor,
                transA ? openblas_nolapack.CblasTrans : openblas_nolapack.CblasNoTrans,
                transB ? openblas_nolapack.CblasTrans : openblas_nolapack.CblasNoTrans,
                m, n, k, 1f, a, lda, b, ldb, beta, c, ldc);
    }

    /**
     * Sets {@code count} floats from {@code c}'s position to +0.0 (C's {@code memset}; JavaCPP's
     * {@code Pointer.memset} counts a typed pointer's position in bytes, hence the byte view).
     *
     * @param c the first float (modified)
     * @param count number of floats
     */
    static void zero(FloatPointer c, long count) {
        Pointer.memset(new BytePointer(c).position(c.position() * Float.BYTES), 0, count * Float.BYTES);
    }

    /**
     * {@code y = y + x} over n floats (cblas_saxpy with alpha 1).
     *
     * @param n number of elements
     * @param x the addend (not modified)
     * @param y the sum (modified)
     */
    static void addInPlace(int n, FloatPointer x, FloatPointer y) {
        openblas_nolapack.cblas_saxpy(n, 1f, x, 1, y, 1);
    }

    /** A zero-filled float32 array of the given shape in 'c' order, outside any ND4J workspace. */
    static INDArray zeros(long... shape) {
        try (MemoryWorkspace ignored = Nd4j.getWorkspaceManager().scopeOutOfWorkspaces()) {
            return Nd4j.create(DataType.FLOAT, shape, 'c');
        }
    }

    /** Whether {@code x} is float32 and its elements lie densely in row-major order from its offset. */
    static boolean isDenseFloat(INDArray x) {
        if (x.dataType() != DataType.FLOAT) {
            return false;
        }
        if (x.length() <= 1) {
            return true;
        }
        if (x.rank() <= 1 || x.isVector()) {
            return x.elementWiseStride() == 1;
        }
        return x.ordering() == 'c' && x.elementWiseStride() == 1;
    }

    /** {@code x} itself if dense float32 row-major, else a dense float32 row-major copy. */
    static INDArray denseFloat(INDArray x) {
        if (isDenseFloat(x)) {
            return x;
        }
        try (MemoryWorkspace ignored = Nd4j.getWorkspaceManager().scopeOutOfWorkspaces()) {
            return x.castTo(DataType.FLOAT).dup('c');
        }
    }

    /** A pointer to the first element of a dense float32 array (its view offset included). */
    static FloatPointer pointer(INDArray dense) {
        FloatPointer p = new FloatPointer(dense.data().addressPointer());
        p.position(0);
        p.limit(dense.length());
        p.capacity(dense.length());
        return p;
    }

    /** A pointer {@code offset} floats past the start of {@code base}. */
    static FloatPointer offset(FloatPointer base, long offset) {
        FloatPointer p = new FloatPointer(base);
        p.position(base.position() + offset);
        return p;
    }

    /** A buffer over the elements of a dense float32 array; absolute get/put only. */
    static FloatBuffer buffer(INDArray dense) {
        return pointer(dense).asBuffer();
    }
}
