package org.backstep.internal.chain;

import org.backstep.option.ImputationOptions;
import org.backstep.option.SamplerKind;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Imputation on the reverse chain: draws of the missing cells of each incomplete record from the
 * model's conditional distribution given its observed cells, the observed cells held by
 * replacement (Lugmayr et al. 2022, algorithm 1) or by the kernel product (Sohl-Dickstein et al.
 * 2015, section 2.5.2); see {@code org.backstep.option.Conditioning}. Then the per-cell mean and
 * the central interval of the draws (empirical quantiles, Hyndman &amp; Fan 1996, type 7).
 */
public final class Imputer {

    private Imputer() {
    }

    /**
     * @param engine the model's engine
     * @param records records with the training columns; NaN marks a missing cell
     * @param how draws, level, steps, rounds and method (steps capped at T)
     * @param seed the seed; draw k uses seed + 1,000,003 k
     * @return the draws, the mean and the interval
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static Imputation impute(Engine engine, Table records, ImputationOptions how, long seed) {
        int rows = records.rows();
        int[] todo = records.incompleteRowIndices();
        int n = todo.length;
        float[] known = n == 0 ? new float[0] : engine.modelSpace(records.selectRows(todo));
        Chain c = engine.chainOf(Math.min(how.steps(), engine.steps()));
        List<Table> tables = new ArrayList<>();
        for (int k = 0; k < how.draws(); k++) {
            long drawSeed = seed + 1_000_003L * k;
            float[] all = Parallel.fillChunks(n, c.d, engine.threads(), drawSeed, (from, m, rng, x) -> {
                float[] kn = BoundEvaluator.slice(known, from, m, c.d);
                c.drawPrior(x, m, rng);
                ReverseRun.replaceKnown(c, x, kn, m, c.steps, rng);
                ReverseRun.run(c, x, m, c.steps, kn, how.rounds(), SamplerKind.ANCESTRAL, 0.0, how.method(), rng);
            });
            double[][] completed = records.toArray();
            if (n > 0) {
                Table drawn = engine.transform().fromModelSpace(Engine.toRows(all, n, c.d));
                for (int r = 0; r < n; r++) {
                    double[] row = completed[todo[r]];
                    for (int j = 0; j < row.length; j++) {
                        if (Double.isNaN(row[j])) {
                            row[j] = drawn.get(r, j);
                        }
                    }
                }
            }
            tables.add(records.withRows(completed));
        }
        int cols = records.columns();
        double[][] mean = new double[rows][cols];
        double[][] lo = new double[rows][cols];
        double[][] hi = new double[rows][cols];
        double[] cell = new double[how.draws()];
        double level = how.level();
        for (int i = 0; i < rows; i++) {
            for (int j = 0; j < cols; j++) {
                double obs = records.get(i, j);
                if (!Double.isNaN(obs)) {
                    mean[i][j] = obs;
                    lo[i][j] = obs;
                    hi[i][j] = obs;
                    continue;
                }
                for (int k = 0; k < cell.length; k++) {
                    cell[k] = tables.get(k).get(i, j);
                }
                mean[i][j] = Arrays.stream(cell).average().orElseThrow();
                lo[i][j] = quantile(cell, (1.0 - level) / 2.0);
                hi[i][j] = quantile(cell, 1.0 - (1.0 - level) / 2.0);
            }
        }
        return new Imputation(tables, withValues(records, mean), withValues(records, lo), withValues(records, hi),
                level);
    }

    /** The empirical quantile with linear interpolation between order statistics (Hyndman &amp; Fan 1996, type 7). */
    public static double quantile(double[] values, double q) {
        double[] s = values.clone();
        Arrays.sort(s);
        double h = (s.length - 1) * q;
        int lo = (int) Math.floor(h);
        int hi = Math.min(s.length - 1, lo + 1);
        return s[lo] + (h - lo) * (s[hi] - s[lo]);
    }

    /** Tables of the records' layout holding given values; binary cells as they are (a mean may be fractional). */
    static Table withValues(Table layout, double[][] values) {
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < layout.columns(); j++) {
            kinds.add(ColumnKind.CONTINUOUS);
        }
        return Table.of(layout.names(), kinds, values);
    }
}
