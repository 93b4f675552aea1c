package org.backstep.spark;

import org.apache.spark.sql.SparkSession;

/**
 * One local SparkSession for every test class of this module (surefire runs them in one JVM):
 * Spark's start-up is paid once. local[2]: two executor threads in this JVM, as on the two-core
 * machines the project is built on. The session is stopped when the JVM exits.
 */
final class LocalSpark {

    private static SparkSession session;
    private static long startupNanos;

    private LocalSpark() {
    }

    /** @return the shared session, started on first use */
    static synchronized SparkSession session() {
        if (session == null) {
            long t0 = System.nanoTime();
            session = SparkSession.builder()
                    .appName("backstep-tests")
                    .master("local[2]")
                    .config("spark.ui.enabled", "false")
                    .config("spark.sql.shuffle.partitions", "4")
                    .config("spark.driver.host", "127.0.0.1")
                    .config("spark.driver.bindAddress", "127.0.0.1")
                    .getOrCreate();
            startupNanos = System.nanoTime() - t0;
            Runtime.getRuntime().addShutdownHook(new Thread(() -> session.stop()));
        }
        return session;
    }

    /** @return how long the first {@link #session()} call took to start Spark, in nanoseconds */
    static synchronized long startupNanos() {
        return startupNanos;
    }
}
