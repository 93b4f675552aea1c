package org.backstep.spark;

import java.util.ArrayList;
import java.util.List;
import java.util.concurrent.ExecutionException;
import java.util.concurrent.ExecutorService;
import java.util.concurrent.Executors;
import java.util.concurrent.Future;
import java.util.function.IntConsumer;

import org.apache.spark.TaskContext;

/**
 * Runs the rows of a batch on the cores a Spark task was given ({@code spark.task.cpus}): the
 * calling thread takes the first contiguous share and helper threads the others. Each row's result
 * depends on its own seed only, so the split does not change any figure.
 */
final class TaskThreads {

    private static final ExecutorService HELPERS = Executors.newCachedThreadPool(r -> {
        Thread t = new Thread(r, "backstep-spark-task");
        t.setDaemon(true);
        return t;
    });

    private TaskThreads() {
    }

    /** @return the cores of the running task ({@code TaskContext.cpus()}), 1 outside a task */
    static int taskCpus() {
        TaskContext tc = TaskContext.get();
        return tc == null ? 1 : Math.max(1, tc.cpus());
    }

    /**
     * Calls {@code body(i)} for i = 0..count-1 on up to {@code threads} threads and waits for all;
     * the first failure is rethrown.
     */
    static void forEach(int count, int threads, IntConsumer body) {
        int parts = Math.max(1, Math.min(threads, count));
        if (parts == 1) {
            for (int i = 0; i < count; i++) {
                body.accept(i);
            }
            return;
        }
        List<Future<?>> helpers = new ArrayList<>();
        for (int p = 1; p < parts; p++) {
            int from = (int) ((long) count * p / parts);
            int to = (int) ((long) count * (p + 1) / parts);
            helpers.add(HELPERS.submit(() -> {
                for (int i = from; i < to; i++) {
                    body.accept(i);
                }
            }));
        }
        RuntimeException first = null;
        try {
            for (int i = 0; i < count / parts; i++) {
                body.accept(i);
            }
        } catch (RuntimeException e) {
            first = e;
        }
        for (Future<?> f : helpers) {
            try {
                f.get();
            } catch (ExecutionException e) {
                if (first == null) {
                    first = e.getCause() instanceof RuntimeException re ? re : new IllegalStateException(e.getCause());
                }
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                if (first == null) {
                    first = new IllegalStateException("interrupted while scoring a batch", e);
                }
            }
        }
        if (first != null) {
            throw first;
        }
    }
}
