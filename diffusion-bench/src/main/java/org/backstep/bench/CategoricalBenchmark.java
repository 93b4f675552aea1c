package org.backstep.bench;

import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.internal.train.TrainingRun;
import org.backstep.option.FitOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.option.TrainingBudget;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.training.TrainingListener;
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
import org.openjdk.jmh.annotations.TearDown;
import org.openjdk.jmh.annotations.Warmup;

/**
 * The cost of a categorical column of K categories (issue 12): one training update and one sampled
 * row, in milliseconds, for a table of 4 continuous columns and one categorical column with
 * K = 10 or 1,000 (K = 0: the 4 continuous columns alone, the baseline). The network sees the
 * category one-hot (K inputs) and gives K logits, and the bound terms and draws are O(K) per cell
 * (multinomial diffusion of Hoogeboom et al. 2021, section 4), so both costs should grow with K
 * about as the network's first and last layers do, not with K^2.
 *
 * <ul>
 *   <li>{@link #trainingStep}: one update of a training run (x_t drawn, one-hot input, forward,
 *       loss gradient with the categorical KL terms, backward, Adam), batch 256, 3 x 256 network,
 *       T = 100, 2 threads.</li>
 *   <li>{@link #sampleRows}: 256 rows through the full chain of T = 100 steps, from a model fitted
 *       for one epoch; divide by 256 for the cost per row.</li>
 * </ul>
 */
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
@Warmup(iterations = 2, time = 2)
@Measurement(iterations = 3, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xmx2g", "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn"})
public class CategoricalBenchmark {

    /** Rows of the table. */
    static final int ROWS = 4096;
    /** Rows per sampling call. */
    static final int SAMPLED = 256;
    /** T. */
    static final int STEPS = 100;

    /** A table of 4 continuous columns and a categorical column of K categories (0: none), seeded. */
    static Table table(int categories, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        List<String> names = new ArrayList<>(List.of("a", "b", "c", "d"));
        List<ColumnKind> kinds = new ArrayList<>(List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS));
        List<String> labels = new ArrayList<>();
        for (int k = 0; k < categories; k++) {
            labels.add("code" + k);
        }
        if (categories > 0) {
            names.add("code");
            kinds.add(ColumnKind.CATEGORICAL);
        }
        double[][] rows = new double[ROWS][names.size()];
        for (int r = 0; r < ROWS; r++) {
            // every category appears; the readings shift with the category
            int code = categories > 0 ? (r < categories ? r : rng.nextInt(categories)) : 0;
            for (int j = 0; j < 4; j++) {
                rows[r][j] = rng.nextGaussian() + 0.01 * code;
            }
            if (categories > 0) {
                rows[r][4] = code;
            }
        }
        return categories > 0 ? Table.of(names, kinds, Map.of("code", labels), rows) : Table.of(names, kinds, rows);
    }

    static Backstep.Builder builder() {
        return Backstep.builder().steps(STEPS).hidden(256, 256, 256).batchSize(256).checkpointFraction(0.0)
                .threads(2).seed(5);
    }

    /** A training run kept open, one update per call. */
    @State(Scope.Benchmark)
    public static class Training {

        /** K of the categorical column; 0 for none. */
        @Param({"0", "10", "1000"})
        public int categories;

        TrainingRun run;

        /** Starts a seeded run with a budget far beyond what the benchmark spends. */
        @Setup(Level.Trial)
        public void setUp() {
            FitOptions options = builder().options();
            run = new TrainingRun(options, table(categories, 3), null, TrainingListener.NONE, () -> false,
                    TrainingBudget.updates(1_000_000_000));
        }

        /** Stops the run's threads. */
        @TearDown(Level.Trial)
        public void tearDown() {
            run.close();
        }
    }

    /** A model fitted for one epoch. */
    @State(Scope.Benchmark)
    public static class Sampling {

        /** K of the categorical column; 0 for none. */
        @Param({"0", "10", "1000"})
        public int categories;

        DiffusionModel model;
        SamplingPlan plan;

        /** Fits the seeded model. */
        @Setup(Level.Trial)
        public void setUp() {
            model = builder().epochs(1).fit(table(categories, 3));
            plan = SamplingPlan.ancestral(STEPS);
        }
    }

    /**
     * @param s the open run
     * @return the updates done (kept by JMH)
     */
    @Benchmark
    public long trainingStep(Training s) {
        s.run.advance(s.run.updates() + 1);
        return s.run.updates();
    }

    /**
     * @param s the model
     * @return the sampled rows (kept by JMH)
     */
    @Benchmark
    public Table sampleRows(Sampling s) {
        return s.model.sample(SAMPLED, s.plan, 7);
    }
}
