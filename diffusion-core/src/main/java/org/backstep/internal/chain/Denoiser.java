package org.backstep.internal.chain;

import org.backstep.option.DenoisingOptions;
import org.backstep.option.SamplerKind;
import org.backstep.report.Denoising;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;

/**
 * Denoising on the reverse chain. In model space a reading is z_y = z + n with n ~ N(0, s_j^2),
 * s_j the column's noise over its scale; the chain starts at the first step t* whose noise level
 * (1 - alpha-bar)/alpha-bar reaches max_j s_j^2, with x_{t*} = sqrt(alpha-bar_{t*}) (z_y + m),
 * m ~ N(0, (1 - alpha-bar_{t*})/alpha-bar_{t*} - s_j^2) topping each column up to that level, so that
 * x_{t*} is exactly a draw of q(x_{t*} | x_0) (Ho et al. 2020, eq. 4); then the reverse chain runs
 * down to x_0 on a strided subset of the steps 1..t*. Binary and constant columns are taken as
 * observed exactly.
 */
public final class Denoiser {

    private Denoiser() {
    }

    /**
     * @param engine the model's engine
     * @param readings complete noisy records with the training columns
     * @param how the per-column noise (original units), draws and the most chain steps
     * @param seed the seed; draw k uses seed + 1,000,003 k
     * @return posterior mean and spread per cell
     * @throws IllegalArgumentException naming a column that is log-transformed or whose noise is
     *     not a finite number above 0, or if the noise exceeds what the schedule can absorb
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static Denoising denoise(Engine engine, Table readings, DenoisingOptions how, long seed) {
        return denoise(engine, readings, how, seed, null);
    }

    /**
     * {@link #denoise(Engine, Table, DenoisingOptions, long)} with a seed per record: draw k of
     * record i is made from {@link Parallel#random}(rowSeeds[i] + 1,000,003 k, 0), as a one-record
     * table seeded with rowSeeds[i] draws it, so a record's draws do not depend on the other records.
     *
     * @param engine the model's engine
     * @param readings complete noisy records with the training columns
     * @param how the per-column noise (original units), draws and the most chain steps
     * @param rowSeeds one seed per record (length checked by the caller; not modified)
     * @return posterior mean and spread per cell
     * @throws IllegalArgumentException as the one-seed form
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static Denoising denoise(Engine engine, Table readings, DenoisingOptions how, long[] rowSeeds) {
        return denoise(engine, readings, how, 0L, rowSeeds);
    }

    private static Denoising denoise(Engine engine, Table readings, DenoisingOptions how, long seed, long[] rowSeeds) {
        double[] noiseSd = how.noiseSd();
        if (noiseSd.length != readings.columns()) {
            throw new IllegalArgumentException("noiseSd has " + noiseSd.length + " entries; expected one per column, "
                    + readings.columns());
        }
        float[] z = engine.modelSpace(readings);
        int[] cont = engine.transform().modelledContinuous();
        double[] s2 = new double[cont.length];
        double max = 0.0;
        for (int j = 0; j < cont.length; j++) {
            int col = cont[j];
            ColumnTransform tr = engine.transform().transform(col);
            if (tr.kind() != ColumnTransform.Kind.STANDARDIZE) {
                throw new IllegalArgumentException("column '" + readings.name(col) + "' is " + tr.kind()
                        + "; denoising needs standardized columns (additive noise on a log scale is not Gaussian)");
            }
            double sd = noiseSd[col];
            if (!(sd > 0) || !Double.isFinite(sd)) {
                throw new IllegalArgumentException("noiseSd of column '" + readings.name(col) + "' is " + sd
                        + "; expected a finite number above 0");
            }
            s2[j] = (sd / tr.scale()) * (sd / tr.scale());
            max = Math.max(max, s2[j]);
        }
        NoiseSchedule schedule = engine.parts().options().continuousSchedule();
        int steps = engine.steps();
        int start = steps;
        for (int t = 1; t <= steps; t++) {
            if (schedule.oneMinusAlphaBar(t) / schedule.alphaBar(t) >= max) {
                start = t;
                break;
            }
        }
        double startLevel = schedule.oneMinusAlphaBar(start) / schedule.alphaBar(start);
        if (startLevel < max) {
            throw new IllegalArgumentException("the noise is larger than the schedule's last step can absorb (noise over "
                    + "scale squared " + max + " > " + startLevel + "); these readings carry no usable signal");
        }
        int count = Math.min(how.steps(), start);
        int[] keep = new int[count];
        for (int i = 0; i < count; i++) {
            keep[i] = count == 1 ? start : (int) Math.round(1.0 + (start - 1.0) * i / (count - 1.0));
        }
        Chain c = engine.chain().subset(keep);
        double sqrtAbar = Math.sqrt(schedule.alphaBar(start));
        int rows = readings.rows();
        int d = c.d;
        float[] known = new float[rows * d];
        for (int r = 0; r < rows; r++) {
            for (int j = 0; j < d; j++) {
                known[r * d + j] = j < c.dc ? Float.NaN : z[r * d + j];
            }
        }
        int cols = readings.columns();
        double[][] sum = new double[rows][cols];
        double[][] sumSq = new double[rows][cols];
        for (int k = 0; k < how.draws(); k++) {
            long offset = rowSeeds == null ? seed + 1_000_003L * k : 1_000_003L * k;
            float[] all = Parallel.fillChunks(rows, d, engine.threads(), offset, rowSeeds, (from, n, rng, x) -> {
                float[] kn = BoundEvaluator.slice(known, from, n, d);
                for (int r = 0; r < n; r++) {
                    for (int j = 0; j < c.dc; j++) {
                        double extra = Math.sqrt(Math.max(0.0, startLevel - s2[j])) * rng[r].nextGaussian();
                        x[r * d + j] = (float) (sqrtAbar * (z[(from + r) * d + j] + extra));
                    }
                }
                ReverseRun.replaceKnown(c, x, kn, n, c.steps, rng);
                ReverseRun.run(c, x, n, c.steps, kn, 1, SamplerKind.ANCESTRAL, 0.0, rng);
            });
            Table drawn = engine.transform().fromModelSpace(Engine.toRows(all, rows, d));
            for (int i = 0; i < rows; i++) {
                for (int j = 0; j < cols; j++) {
                    double v = drawn.get(i, j);
                    sum[i][j] += v;
                    sumSq[i][j] += v * v;
                }
            }
        }
        int draws = how.draws();
        double[][] mean = new double[rows][cols];
        double[][] sd = new double[rows][cols];
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < cols; j++) {
                mean[i][j] = sum[i][j] / draws;
                double var = draws > 1 ? (sumSq[i][j] - draws * mean[i][j] * mean[i][j]) / (draws - 1) : 0.0;
                sd[i][j] = Math.sqrt(Math.max(0.0, var));
            }
        }
        return new Denoising(Imputer.withValues(readings, mean), Imputer.withValues(readings, sd), draws, start);
    }
}
