package org.backstep.bench;

import java.util.ArrayList;
import java.util.List;
import java.util.SplittableRandom;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.StepInput;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * Seeded tables and quickly fitted models for the benchmarks, and the arithmetic count of a
 * model's network.
 *
 * <p>The tables are invented refrigerated-container telemetry: {@code columns} continuous readings
 * that share one latent load factor, {@code x_j = 0.6 z_0 + 0.8 z_j} with independent standard
 * normal z (so every pair of columns correlates at 0.36). A benchmark measures speed, so the model
 * is fitted for one epoch only: the arithmetic of a pass does not depend on how well the weights are
 * trained.
 */
final class Fixtures {

    /** Hidden widths of every benchmarked network (the library default). */
    static final int[] HIDDEN = {256, 256, 256};

    private Fixtures() {
    }

    /**
     * A table of {@code rows} invented telemetry records with {@code columns} continuous columns.
     *
     * @param rows records
     * @param columns continuous columns
     * @param seed the seed
     * @return the table
     */
    static Table telemetry(int rows, int columns, long seed) {
        SplittableRandom random = new SplittableRandom(seed);
        double[][] cells = new double[rows][columns];
        for (double[] row : cells) {
            double load = random.nextGaussian();
            for (int j = 0; j < columns; j++) {
                row[j] = 0.6 * load + 0.8 * random.nextGaussian();
            }
        }
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < columns; j++) {
            names.add("probe_" + j);
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(names, kinds, cells);
    }

    /**
     * A model with the library's default network (3 x 256, step embedding of 32 entering every
     * block, learned variances) fitted for one epoch on 1,024 telemetry records, without held-out
     * evaluation.
     *
     * @param columns continuous columns
     * @param steps T
     * @param threads worker threads of the model
     * @param seed the seed of the data and the fit
     * @return the model
     */
    static DiffusionModel fit(int columns, int steps, int threads, long seed) {
        return Backstep.builder()
                .steps(steps)
                .hidden(HIDDEN)
                .epochs(1)
                .checkpointFraction(0.0)
                .threads(threads)
                .seed(seed)
                .fit(telemetry(1024, columns, seed));
    }

    /**
     * A model fitted as the README's demo fits (standardized coordinates and maps, no closed-form
     * part), 20 epochs on 2,048 telemetry records at the library's defaults otherwise: fitted far
     * enough that its steady bound costs per record what a fitted model's does.
     *
     * @param columns continuous columns
     * @param seed the seed of the data and the fit
     * @return the model
     */
    static DiffusionModel steadyFit(int columns, long seed) {
        return Backstep.builder()
                .coordinates(org.backstep.option.Coordinates.STANDARDIZED)
                .marginals(org.backstep.option.Marginals.STANDARDIZED)
                .baseline(org.backstep.option.Baseline.NONE)
                .epochs(20)
                .seed(seed)
                .fit(telemetry(2048, columns, seed));
    }

    /**
     * Floating-point operations of one forward pass of a model's network per row (see
     * {@link #forwardFlopsPerRow(int, int[], int, int, boolean)}).
     *
     * @param model the model (all columns continuous)
     * @return operations per row per step
     */
    static double forwardFlopsPerRow(DiffusionModel model) {
        FitOptions o = model.options();
        int d = model.dimensions();
        int outputs = o.variance() == ReverseVariance.LEARNED ? 2 * d : d;   // all columns continuous here
        return forwardFlopsPerRow(d, o.hidden(), outputs, o.embeddingSize(),
                o.stepInput() == StepInput.EVERY_BLOCK);
    }

    /**
     * Floating-point operations of one forward pass per row: {@code 2 sum_j fanIn_j fanOut_j}, fanIn
     * counting the previous layer's units and the step embedding where it enters; a matrix product
     * of n rows costs 2 n fanIn fanOut operations. The bias row (one more multiply-add per output),
     * SiLU and the chain's per-cell update are not counted.
     *
     * @param inputs columns of x_t
     * @param hidden hidden widths (not modified)
     * @param outputs output columns
     * @param embedding size of the step embedding
     * @param everyBlock whether the embedding enters every hidden block (else the first only)
     * @return operations per row
     */
    static double forwardFlopsPerRow(int inputs, int[] hidden, int outputs, int embedding, boolean everyBlock) {
        double sum = 0;
        int previous = inputs;
        for (int l = 0; l < hidden.length; l++) {
            boolean embedded = l == 0 || everyBlock;
            sum += (double) (previous + (embedded ? embedding : 0)) * hidden[l];
            previous = hidden[l];
        }
        sum += (double) previous * outputs;
        return 2.0 * sum;
    }

    /** A checksum of a table that the JIT cannot drop: the sum of every cell. */
    static double checksum(Table table) {
        double s = 0;
        for (double[] row : table.toArray()) {
            for (double v : row) {
                if (!Double.isNaN(v)) {     // a cell left missing (a decoding of the missing cells only)
                    s += v;
                }
            }
        }
        return s;
    }
}
