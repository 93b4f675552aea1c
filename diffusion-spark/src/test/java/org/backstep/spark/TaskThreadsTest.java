package org.backstep.spark;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import java.util.concurrent.atomic.AtomicIntegerArray;

import org.junit.jupiter.api.Test;
import org.nd4j.linalg.factory.Nd4j;

/** The per-task threads: every row once, failures passed on, ND4J's threads set to the task's cores. */
class TaskThreadsTest {

    @Test
    void everyIndexRunsExactlyOnceOnAnyThreadCount() {
        for (int threads : new int[] {1, 2, 3, 8}) {
            for (int count : new int[] {0, 1, 5, 17}) {
                AtomicIntegerArray seen = new AtomicIntegerArray(count);
                TaskThreads.forEach(count, threads, seen::incrementAndGet);
                for (int i = 0; i < count; i++) {
                    assertEquals(1, seen.get(i), "index " + i + " of " + count + " on " + threads + " threads");
                }
            }
        }
    }

    @Test
    void aFailureOnAHelperThreadReachesTheCaller() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> TaskThreads.forEach(10, 2, i -> {
            if (i == 9) {
                throw new IllegalArgumentException("row 9");
            }
        }));
        assertEquals("row 9", e.getMessage());
    }

    @Test
    void nd4jThreadsFollowTheTaskCores() {
        Nd4j.getEnvironment().setMaxThreads(2);
        BackstepModel.of(TestModels.model()).setScoreDraws(1)
                .transform(TestModels.frame(TestModels.readings(4, 40), 2)).count();
        // the test session runs tasks with spark.task.cpus = 1 (Spark's default)
        assertEquals(1, Nd4j.getEnvironment().maxThreads());
        assertEquals(1, TaskThreads.taskCpus());
    }
}
