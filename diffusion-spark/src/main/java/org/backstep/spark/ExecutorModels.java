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
 * <p>Native set-up, once per JVM, before the first model loads: ND4J's own thread count (its
 * OpenMP pool, {@code Nd4j.getEnvironment().setMaxThreads}) is set to the cores a Spark task is
 * given ({@code spark.task.cpus}), so that the tasks running side by side on an executor do not
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
    private static boolean nativesReady;

    private ExecutorModels() {
    }

    /**
     * The model with the given hash, loaded from {@code bytes} if this JVM has not loaded it yet.
     *
     * @param sha256 the hex SHA-256 of the model file's bytes
     * @param bytes supplies the bytes (a broadcast variable's value), called only to load
     * @param taskCpus the cores of one task, for the native set-up
     * @return the model
     */
    static synchronized DiffusionModel get(String sha256, Supplier<byte[]> bytes, int taskCpus) {
        DiffusionModel m = LOADED.get(sha256);
        if (m == null) {
            if (!nativesReady) {
                Nd4j.getEnvironment().setMaxThreads(Math.max(1, taskCpus));
                nativesReady = true;
            }
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
