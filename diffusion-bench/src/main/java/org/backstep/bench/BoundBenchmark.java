package org.backstep.bench;

import org.backstep.Defaults;
import org.backstep.option.BoundOptions;
import java.util.concurrent.TimeUnit;

import org.backstep.report.BoundReport;
import org.backstep.DiffusionModel;
import org.backstep.table.Table;
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
 * The negative variational bound of 1,000 records (Ho et al. 2020, eq. 5), in milliseconds per
 * call: exactly, with all T terms (T network passes per record), and by Monte Carlo with
 * {@value #DRAWS} drawn terms plus the exact prior and decoder terms ({@value #DRAWS} + 1 passes per
 * record). The model: 8 continuous columns, 3 x 256 hidden units, the library's defaults otherwise,
 * on {@code threads} worker threads. {@link #steadyScreen} scores {@value #STEADY_RECORDS} records as
 * {@code screen} does at its defaults, by the steady bound ({@code Defaults.steadyBound()}: the
 * draws of each term allocated by the model's term profile, measured once in the setup), on the
 * model of {@link Fixtures#steadyFit} (20 epochs, so that its plan is as costly per record as a
 * fitted model's: a one-epoch model's terms are nearly noiseless and its plan about 15 times cheaper).
 */
@State(Scope.Benchmark)
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
@Warmup(iterations = 2, time = 2)
@Measurement(iterations = 3, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xmx2g", "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn"})
public class BoundBenchmark {

    /** Records scored per call. */
    static final int RECORDS = 1000;
    /** Continuous columns. */
    static final int COLUMNS = 8;
    /** Monte Carlo draws per record. */
    static final int DRAWS = 32;
    /** Records scored per call of {@link #steadyScreen}: a full chunk of 256 and a partial one. */
    static final int STEADY_RECORDS = 300;

    /** T of the model. */
    @Param({"100", "1000"})
    public int steps;

    /** Worker threads of the model. */
    @Param({"2"})
    public int threads;

    private DiffusionModel model;
    private Table records;

    /** Fits a seeded model and draws seeded records to score. */
    @Setup(Level.Trial)
    public void setUp() {
        model = Fixtures.fit(COLUMNS, steps, threads, 11);
        records = Fixtures.telemetry(RECORDS, COLUMNS, 12);
    }

    /** The model and records of {@link #steadyScreen}. */
    @State(Scope.Benchmark)
    public static class Steady {
        DiffusionModel model;
        Table records;

        /** Fits the model and measures its term profile. */
        @Setup(Level.Trial)
        public void setUp() {
            model = Fixtures.steadyFit(COLUMNS, 3);
            records = Fixtures.telemetry(STEADY_RECORDS, COLUMNS, 13);
            model.screeningScores(records.selectRows(new int[] {0}), Defaults.steadyBound(), 5);   // the profile
        }
    }

    /** @return the exact bound of every record */
    @Benchmark
    public BoundReport exact() {
        return model.bound(records, 5);
    }

    /** @return the steady score of each record, as {@code screen} scores it at its defaults */
    @Benchmark
    public double[] steadyScreen(Steady steady) {
        return steady.model.screeningScores(steady.records, Defaults.steadyBound(), 5);
    }

    /** @return the Monte Carlo estimate of every record's bound */
    @Benchmark
    public BoundReport monteCarlo() {
        return model.bound(records, BoundOptions.sampled(DRAWS), 5);
    }
}
