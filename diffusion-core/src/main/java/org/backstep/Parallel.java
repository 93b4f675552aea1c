package org.backstep;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.function.IntConsumer;

/**
 * Runs independent chunks of rows on a few Java threads. Each chunk draws its random numbers from
 * its own generator, seeded from the caller's seed and the chunk's index only, so results do not
 * depend on the thread count or on which thread ran which chunk.
 */
final class Parallel {

    /** Rows per chunk of bound evaluation, sampling and imputation. */
    static final int CHUNK_ROWS = 256;

    private Parallel() {
    }

    /** A generator for chunk {@code chunk} of a job seeded with {@code seed} (SplitMix64 finalizer, common practice). */
    static SplittableRandom random(long seed, long chunk) {
        long z = seed + 0x9E3779B97F4A7C15L * (chunk + 1);
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return new SplittableRandom(z ^ (z >>> 31));
    }

    static int chunks(int rows) {
        return (rows + CHUNK_ROWS - 1) / CHUNK_ROWS;
    }

    /** Runs body(chunk) for chunk = 0..count-1 on up to {@code threads} threads and waits for all. */
    static void forEachChunk(int count, int threads, IntConsumer body) {
        if (threads <= 1 || count <= 1) {
            for (int c = 0; c < count; c++) {
                body.accept(c);
            }
            return;
        }
        ExecutorService pool = Executors.newFixedThreadPool(Math.min(threads, count), r -> {
            Thread t = new Thread(r, "backstep-worker");
            t.setDaemon(true);
            return t;
        });
        try {
            List<Future<?>> futures = new ArrayList<>();
            for (int c = 0; c < count; c++) {
                final int chunk = c;
                futures.add(pool.submit(() -> body.accept(chunk)));
            }
            for (Future<?> f : futures) {
                f.get();
            }
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
            throw new IllegalStateException("interrupted while running chunks", e);
        } catch (ExecutionException e) {
            Throwable cause = e.getCause();
            if (cause instanceof RuntimeException re) {
                throw re;
            }
            if (cause instanceof Error err) {
                throw err;
            }
            throw new IllegalStateException(cause);
        } finally {
            pool.shutdownNow();
        }
    }
}
