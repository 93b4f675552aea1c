package org.backstep.bench;

import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.option.Coordinates;
import org.backstep.option.ImputationOptions;
import org.backstep.option.Marginals;
import org.backstep.Defaults;
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
 * Imputation in milliseconds per call: 128 incomplete telemetry records of 30 continuous columns
 * ({@link Fixtures#telemetry}), 4 draws on all T = 100 steps of a model with a 2 x 64 network fitted
 * for one epoch, in whitened against standardized coordinates. The missing cells follow either
 * 4 patterns shared by all rows ({@code few}: 6 cells each) or a pattern per row ({@code each}:
 * every cell hidden with probability 0.2, as the quality benchmark hides held-out cells). The small
 * network keeps the held-cell arithmetic of the whitened chain (the regression-adjusted
 * replacement) visible beside the network's. The maps of the columns are standardized or the
 * normal scores of a kernel-smoothed distribution function ({@code maps}), whose inverse is a root
 * search over the map's knots: {@link #decodeAll} and {@link #decodeMissing} time the decoding of
 * one draw of the records back to the caller's units, every cell against only the missing ones
 * (what {@code impute} decodes since it stopped decoding the observed cells), on one thread.
 */
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MILLISECONDS)
@Warmup(iterations = 2, time = 2)
@Measurement(iterations = 3, time = 2)
@Fork(value = 1, jvmArgsAppend = {"-Xmx2g", "-Dorg.slf4j.simpleLogger.defaultLogLevel=warn"})
public class ImputationBenchmark {

    static final int COLUMNS = 30;
    static final int ROWS = 128;
    static final int STEPS = 100;
    static final int DRAWS = 4;

    /** A fitted model and incomplete records. */
    @State(Scope.Benchmark)
    public static class Case {

        /** The chain's coordinates. */
        @Param({"WHITENED", "STANDARDIZED"})
        public String coordinates;

        /** The missing cells: "few" (4 patterns) or "each" (a pattern per row). */
        @Param({"few", "each"})
        public String patterns;

        /** The maps of the columns: {@code STANDARDIZED} or {@code NORMAL_SCORES}. */
        @Param({"STANDARDIZED", "NORMAL_SCORES"})
        public String maps;

        DiffusionModel model;
        Table records;
        ImputationOptions how;
        /** The complete records in model space, one draw's worth of cells to decode. */
        double[][] modelRows;
        /** The same with the observed cells NaN: only the missing cells to decode. */
        double[][] missingRows;

        /** Fits the seeded model and hides the cells. */
        @Setup(Level.Trial)
        public void setUp() {
            model = Backstep.builder()
                    .steps(STEPS)
                    .hidden(64, 64)
                    .epochs(1)
                    .checkpointFraction(0.0)
                    .threads(1)
                    .seed(41)
                    .coordinates(Coordinates.valueOf(coordinates))
                    .marginals(Marginals.valueOf(maps))
                    .fit(Fixtures.telemetry(1024, COLUMNS, 41));
            Table full = Fixtures.telemetry(ROWS, COLUMNS, 42);
            double[][] cells = full.toArray();
            SplittableRandom random = new SplittableRandom(43);
            for (int r = 0; r < ROWS; r++) {
                for (int j = 0; j < COLUMNS; j++) {
                    boolean hide = "few".equals(patterns) ? (j % 4 == r % 4 && j < 24)
                            : random.nextDouble() < 0.2;
                    if (hide) {
                        cells[r][j] = Double.NaN;
                    }
                }
                cells[r][r % COLUMNS] = "each".equals(patterns) ? Double.NaN : cells[r][r % COLUMNS];
            }
            records = full.withRows(cells);
            how = Defaults.imputation().withDraws(DRAWS).withSteps(STEPS);
            modelRows = model.transform().toModelSpace(full);
            missingRows = new double[ROWS][];
            for (int r = 0; r < ROWS; r++) {
                missingRows[r] = modelRows[r].clone();
                for (int j = 0; j < COLUMNS; j++) {
                    if (!Double.isNaN(cells[r][j])) {
                        missingRows[r][j] = Double.NaN;     // model column j is table column j: all continuous
                    }
                }
            }
        }
    }

    /**
     * @param c the model and records
     * @return a checksum of the imputed means
     */
    @Benchmark
    public double impute(Case c) {
        return Fixtures.checksum(c.model.impute(c.records, c.how, 7).mean());
    }

    /**
     * @param c the model and records
     * @return a checksum of every cell decoded
     */
    @Benchmark
    public double decodeAll(Case c) {
        return Fixtures.checksum(c.model.transform().fromModelSpace(c.modelRows));
    }

    /**
     * @param c the model and records
     * @return a checksum of the missing cells decoded (the observed ones come back NaN)
     */
    @Benchmark
    public double decodeMissing(Case c) {
        return Fixtures.checksum(c.model.transform().fromModelSpace(c.missingRows));
    }
}
