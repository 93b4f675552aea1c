package org.backstep.spark;

import org.apache.spark.sql.SparkSession;

/**
 * One local SparkSession for every test class of this module (surefire runs them in one JVM):
 * Spark's start-up is paid once. local[2]: two executor threads in this JVM, as on the two-core
 * machines the project is built on. The session is stopped when the JVM exits. Its start-up is
 * measured by {@code SparkScoringBenchmark} (diffusion-bench/results/spark-scoring.txt).
 */
final class LocalSpark {

    private static SparkSession session;

    private LocalSpark() {
    }

    /** @return the shared session, started on first use */
    static synchronized SparkSession session() {
        if (session == null) {
            session = SparkSession.builder()
                    .appName("backstep-tests")
                    .master("local[2]")
                    .config("spark.ui.enabled", "false")
                    .config("spark.sql.shuffle.partitions", "4")
                    .config("spark.driver.host", "127.0.0.1")
                    .config("spark.driver.bindAddress", "127.0.0.1")
                    .getOrCreate();
            Runtime.getRuntime().addShutdownHook(new Thread(() -> session.stop()));
        }
        return session;
    }
}
