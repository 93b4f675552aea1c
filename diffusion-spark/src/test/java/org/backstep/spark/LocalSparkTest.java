package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertEquals;

import org.junit.jupiter.api.Test;

class LocalSparkTest {

    @Test
    void sessionRunsAJobOnTwoThreads() {
        var spark = LocalSpark.session();
        // sum of 1..1000 = 1000 * 1001 / 2 (common practice, no source)
        long sum = spark.range(1, 1001, 1, 7).toDF("i").selectExpr("sum(i)").first().getLong(0);
        assertEquals(500_500L, sum);
        assertEquals(2, spark.sparkContext().defaultParallelism());
    }
}
