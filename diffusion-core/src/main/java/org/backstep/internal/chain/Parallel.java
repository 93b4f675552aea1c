package org.backstep.internal.chain;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.concurrent.atomic.AtomicBoolean;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.IntConsumer;

/**
 * Runs independent chunks of rows on a few Java threads. Each chunk draws its random numbers from
 * its own generator, seeded from the caller's seed and the chunk's index only, so results do not
 * depend on the thread count or on which thread ran which chunk.
 *
 * <p>Chunk size: the estimator runs its passes in blocks of 256 rows whatever it is given (the
 * network's own block), so larger chunks would not make the matrix products more efficient; they
 * would only change the random streams and make the work split less evenly over two threads.
 */
public final class Parallel {

    /** Rows per chunk of bound evaluation, sampling and imputation. */
    public static final int CHUNK_ROWS = 256;

    private Parallel() {
    }

    /** A generator for chunk {@code chunk} of a job seeded with {@code seed} (SplitMix64 finalizer, common practice). */
    public static SplittableRandom random(long seed, long chunk) {
        long z = seed + 0x9E3779B97F4A7C15L * (chunk + 1);
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return new SplittableRandom(z ^ (z >>> 31));
    }

    public static int chunks(int rows) {
        return (rows + CHUNK_ROWS - 1) / CHUNK_ROWS;
    }

    /**
     * Worker threads shared by every call: daemon threads, made on demand and ended after a minute
     * unused. Reusing them keeps each thread's network buffers (the estimator's per-thread passes)
     * and its one-BLAS-thread setting from one call to the next, instead of paying for new threads
     * and buffers on every call, which showed for short chains (1,000 records, 10 steps).
     */
    private static final ExecutorService WORKERS = Executors.newCachedThreadPool(r -> {
        Thread t = new Thread(r, "backstep-worker");
        t.setDaemon(true);
        return t;
    });

    /**
     * Runs body(chunk) for chunk = 0..count-1 on up to {@code threads} threads (the calling thread
     * and {@code threads - 1} workers, each taking the next chunk not yet taken) and waits for all.
     * The first failure stops the taking of further chunks and is rethrown.
     */
    public static void forEachChunk(int count, int threads, IntConsumer body) {
        if (threads <= 1 || count <= 1) {
            for (int c = 0; c < count; c++) {
                body.accept(c);
            }
            return;
        }
        AtomicInteger next = new AtomicInteger();
        AtomicBoolean failed = new AtomicBoolean();
        Runnable drain = () -> {
            int c;
            while (!failed.get() && (c = next.getAndIncrement()) < count) {
                try {
                    body.accept(c);
                } catch (RuntimeException | Error e) {
                    failed.set(true);
                    throw e;
                }
            }
        };
        int helpers = Math.min(threads, count) - 1;
        List<Future<?>> futures = new ArrayList<>(helpers);
        for (int i = 0; i < helpers; i++) {
            futures.add(WORKERS.submit(drain));
        }
        Throwable first = null;
        try {
            drain.run();
        } catch (RuntimeException | Error e) {
            first = e;
        }
        boolean interrupted = false;
        for (Future<?> f : futures) {
            while (true) {
                try {
                    f.get();
                    break;
                } catch (InterruptedException e) {
                    interrupted = true;        // stop handing out chunks, then wait for the running ones
                    failed.set(true);
                } catch (ExecutionException e) {
                    if (first == null) {
                        first = e.getCause();
                    }
                    break;
                }
            }
        }
        if (interrupted) {
            Thread.currentThread().interrupt();
            if (first == null) {
                throw new IllegalStateException("interrupted while running chunks");
            }
        }
        if (first instanceof RuntimeException re) {
            throw re;
        }
        if (first instanceof Error err) {
            throw err;
        }
        if (first != null) {
            throw new IllegalStateException(first);
        }
    }

    /** The work of one chunk of a job that produces rows x D model-space values. */
    @FunctionalInterface
    public interface ChunkBody {
        /**
         * @param from the chunk's first row
         * @param rows rows in the chunk
         * @param rng the generator of each row of the chunk: with a job seed, one generator for
         *     every row ({@link #random(long, long)} of the job's seed and the chunk); with a seed per
         *     row, row r's own ({@link #random(long, long)} of its seed plus the job's offset, and 0)
         * @param x rows x D, zero on entry; fill it
         */
        void fill(int from, int rows, SplittableRandom[] rng, float[] x);
    }

    /**
     * The chunk loop of every job that produces rows (sampling, imputation, denoising), written
     * once: rows are cut into chunks of {@link #CHUNK_ROWS}, each chunk fills its own array with
     * its own generator on one of up to {@code threads} threads, and the chunks are copied into one
     * rows x D array. Chunk c's generator depends only on the seed and c, so the result does not
     * depend on the thread count.
     *
     * @param rows rows to produce
     * @param d values per row
     * @param threads threads to use, at least 1
     * @param seed the job's seed
     * @param body the work of one chunk
     * @return rows x D, row-major
     */
    public static float[] fillChunks(int rows, int d, int threads, long seed, ChunkBody body) {
        return fillChunks(rows, d, threads, seed, null, body);
    }

    /**
     * {@link #fillChunks(int, int, int, long, ChunkBody)}, with a seed per row when
     * {@code rowSeeds} is not null: row i draws from {@link #random(long, long)}(rowSeeds[i] +
     * offset, 0), the generator of the only chunk of a one-row job seeded with rowSeeds[i] + offset,
     * so its draws do not depend on the other rows, their order or the chunking (a job's draw k
     * passes its per-draw offset, e.g. 1,000,003 k, as the one-seed form adds it to the job's seed).
     *
     * @param rows rows to produce
     * @param d values per row
     * @param threads threads to use, at least 1
     * @param offset the job's seed, or with row seeds the offset added to each
     * @param rowSeeds one seed per row, or null for the job's seed (not modified)
     * @param body the work of one chunk
     * @return rows x D, row-major
     */
    public static float[] fillChunks(int rows, int d, int threads, long offset, long[] rowSeeds, ChunkBody body) {
        float[] all = new float[Math.multiplyExact(rows, d)];
        forEachChunk(chunks(rows), threads, chunk -> {
            int from = chunk * CHUNK_ROWS;
            int n = Math.min(CHUNK_ROWS, rows - from);
            float[] x = new float[n * d];
            body.fill(from, n, generators(offset, rowSeeds, chunk, n), x);
            System.arraycopy(x, 0, all, from * d, n * d);
        });
        return all;
    }

    /**
     * The generators of chunk {@code chunk}'s n rows: without row seeds, {@link #random(long, long)}(offset,
     * chunk) shared by every row; with them, row i's own {@link #random(long, long)}(rowSeeds[i] + offset, 0).
     *
     * @param offset the job's seed, or with row seeds the offset added to each
     * @param rowSeeds one seed per row of the job, or null
     * @param chunk the chunk (its first row is chunk x {@link #CHUNK_ROWS})
     * @param n the chunk's rows
     * @return n generators
     */
    static SplittableRandom[] generators(long offset, long[] rowSeeds, int chunk, int n) {
        if (rowSeeds == null) {
            return sameForEveryRow(random(offset, chunk), n);
        }
        int from = chunk * CHUNK_ROWS;
        SplittableRandom[] rng = new SplittableRandom[n];
        for (int r = 0; r < n; r++) {
            rng[r] = random(rowSeeds[from + r] + offset, 0);
        }
        return rng;
    }

    /** @return {@code rows} entries, each {@code rng} (every row draws from the one generator) */
    static SplittableRandom[] sameForEveryRow(SplittableRandom rng, int rows) {
        SplittableRandom[] all = new SplittableRandom[rows];
        java.util.Arrays.fill(all, rng);
        return all;
    }
}
