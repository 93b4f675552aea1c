package org.backstep.bench;

import java.util.concurrent.TimeUnit;

import org.backstep.DiffusionModel;
import org.backstep.option.SamplingPlan;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * Synthetic records from a fitted model, in milliseconds per call.
 *
 * <ul>
 *   <li>{@link #strided}: 1,000 records through K = 10, 50, 100, 250 or 1,000 steps strided from
 *       T = 1,000, by the ancestral sampler (Ho et al. 2020, algorithm 2) or the implicit one with
 *       eta = 0 (Song, Meng &amp; Ermon 2021, eq. 12); 8 continuous columns.</li>
 *   <li>{@link #reference}: the reference case, 1,024 records through all 1,000 steps with the
 *       3 x 256 network, 8 or 64 continuous columns, on 1 or 2 worker threads. Its forward
 *       arithmetic is {@code 1024 * 1000 * 2 sum_j fanIn_j fanOut_j} operations
 *       ({@link Fixtures#forwardFlopsPerRow}): 331 GFLOP with 8 columns, 419 GFLOP with 64. The
 *       table script divides it by the measured time to give GFLOP/s.</li>
 * </ul>
 *
 * <p>The model is the library's default network (step embedding in every block, learned variances)
 * fitted for one epoch; on the number of steps the per-call time is linear apart from the per-call
 * work (prior draws, the transform back to original units).
 */
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
@Warmup(iterations = 2, time = 2)
@Measurement(iterations = 3, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xmx2g", "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn"})
public class SamplingBenchmark {

    /** Records per call of {@link #strided}. */
    static final int RECORDS = 1000;
    /** Records per call of {@link #reference}. */
    static final int REFERENCE_RECORDS = 1024;
    /** T of every model. */
    static final int STEPS = 1000;

    /** A model of 8 columns on the default two threads, and a plan per case. */
    @State(Scope.Benchmark)
    public static class Strided {

        /** K, steps of the strided chain. */
        @Param({"10", "50", "100", "250", "1000"})
        public int chainSteps;

        /** The sampler: "ancestral", or "implicit" with eta = 0. */
        @Param({"ancestral", "implicit"})
        public String sampler;

        DiffusionModel model;
        SamplingPlan plan;

        /** Fits the seeded model and makes the plan. */
        @Setup(Level.Trial)
        public void setUp() {
            model = Fixtures.fit(8, STEPS, 2, 21);
            plan = "ancestral".equals(sampler) ? SamplingPlan.ancestral(chainSteps)
                    : SamplingPlan.implicit(chainSteps, 0.0);
        }
    }

    /** The reference case: a model of {@code columns} columns on {@code threads} threads. */
    @State(Scope.Benchmark)
    public static class Reference {

        /** Continuous columns. */
        @Param({"8", "64"})
        public int columns;

        /** Worker threads. */
        @Param({"1", "2"})
        public int threads;

        DiffusionModel model;

        /** Fits the seeded model. */
        @Setup(Level.Trial)
        public void setUp() {
            model = Fixtures.fit(columns, STEPS, threads, 31);
        }
    }

    /**
     * @param s the model and plan
     * @return a checksum of the 1,000 records
     */
    @Benchmark
    public double strided(Strided s) {
        return Fixtures.checksum(s.model.sample(RECORDS, s.plan, 7));
    }

    /**
     * @param s the model
     * @return a checksum of the 1,024 records
     */
    @Benchmark
    @Warmup(iterations = 1, time = 1)
    @Measurement(iterations = 3, time = 1)
    public double reference(Reference s) {
        return Fixtures.checksum(s.model.sample(REFERENCE_RECORDS, SamplingPlan.ancestral(), 7));
    }
}
