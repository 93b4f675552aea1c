package org.backstep.spark;

import java.util.LinkedHashMap;
import java.util.Map;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.function.Supplier;

import org.backstep.DiffusionModel;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The models loaded in this JVM (an executor, or the driver in local mode), keyed by the SHA-256
 * of their file's bytes: a model is loaded once per JVM, whatever the number of tasks, partitions
 * or transforms that use it. The last {@value #KEPT} models used are kept.
 *
 * <p>Threads: ND4J's natives load once per JVM (the first call into ND4J); at each task's first
 * use, ND4J's own thread count (its OpenMP pool, {@code Nd4j.getEnvironment().setMaxThreads}) is
 * set to the cores a Spark task is given ({@code spark.task.cpus}) if it differs, so that the tasks running side by side on an executor do not
 * ask for more threads than the executor has cores. The network's matrix products run in OpenBLAS
 * on the calling thread with one BLAS thread (the core sets that per thread), and a task runs its
 * rows on {@code spark.task.cpus} threads ({@link TaskThreads}).
 */
final class ExecutorModels {

    /** How many models one JVM keeps loaded. */
    static final int KEPT = 4;

    private static final Map<String, DiffusionModel> LOADED = new LinkedHashMap<>(8, 0.75f, true) {
        private static final long serialVersionUID = 1L;

        @Override
        protected boolean removeEldestEntry(Map.Entry<String, DiffusionModel> eldest) {
            return size() > KEPT;
        }
    };
    private static final AtomicInteger LOADS = new AtomicInteger();

    private ExecutorModels() {
    }

    /**
     * The model with the given hash, loaded from {@code bytes} if this JVM has not loaded it yet.
     *
     * @param sha256 the hex SHA-256 of the model file's bytes
     * @param bytes supplies the bytes (a broadcast variable's value), called only to load
     * @param taskCpus the cores of the calling task, or 0 outside a task (ND4J's threads left as they are)
     * @return the model
     */
    static synchronized DiffusionModel get(String sha256, Supplier<byte[]> bytes, int taskCpus) {
        if (taskCpus > 0 && Nd4j.getEnvironment().maxThreads() != taskCpus) {
            Nd4j.getEnvironment().setMaxThreads(taskCpus);
        }
        DiffusionModel m = LOADED.get(sha256);
        if (m == null) {
            m = CoreCalls.fromBytes(bytes.get());
            LOADED.put(sha256, m);
            LOADS.incrementAndGet();
        }
        return m;
    }

    /** @return how many times this JVM has loaded a model from bytes (for tests) */
    static int loads() {
        return LOADS.get();
    }
}
