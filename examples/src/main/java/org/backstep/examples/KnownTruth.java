package org.backstep.examples;

import org.backstep.Defaults;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

import java.io.PrintStream;
import java.util.List;
import java.util.Locale;
import java.util.SplittableRandom;

/**
 * Steps 4 and 5 of the main job, where the truth is known because the damage is done on purpose:
 * one cell of each of some complete held-out rows is hidden and imputed; sensor noise of a known
 * size is added to held-out readings and removed.
 */
final class KnownTruth {

    private KnownTruth() {
    }

    static void imputation(DiffusionModel model, Table heldComplete, Table trainComplete, MainJob.Config c, PrintStream console,
                                   ObjectNode summary) {
        int n = Math.min(MainJob.STEP_ROWS, heldComplete.rows());
        Table truth = heldComplete.selectRows(Stats.spread(n, heldComplete.rows()));
        double[][] hidden = truth.toArray();
        SplittableRandom rng = new SplittableRandom(c.seed() + 17);
        // one cell per row, in a diffused numeric or categorical column (binary cells only when there are no others)
        int[] numeric = model.transform().modelledContinuous();
        int[] cats = model.transform().modelledCategorical();
        int[] cont = java.util.stream.IntStream.concat(java.util.Arrays.stream(numeric), java.util.Arrays.stream(cats)).toArray();
        int hiddenCount = 0;
        int hiddenCats = 0;
        for (double[] row : hidden) {
            int j = cont.length > 0 ? cont[rng.nextInt(cont.length)] : rng.nextInt(row.length);
            row[j] = Double.NaN;
            if (truth.kind(j) == ColumnKind.CATEGORICAL) {
                hiddenCats++;
            } else {
                hiddenCount++;
            }
        }
        Table masked = truth.withRows(hidden);
        Imputation imp = model.impute(masked, Defaults.imputation().withDraws(MainJob.IMPUTATION_DRAWS).withLevel(RowResults.LEVEL), c.seed());
        double se = 0;
        double seMean = 0;
        int covered = 0;
        // categorical columns have no mean or sd; their entries are not read
        double[] colMean = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colMean[j] = Stats.mean(trainComplete.column(j));
        }
        double[] colSd = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colSd[j] = Stats.sd(trainComplete.column(j));
        }
        int right = 0;
        double trueShare = 0;
        int rightByMostFrequent = 0;
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < truth.columns(); j++) {
                if (Double.isNaN(hidden[i][j]) && truth.kind(j) == ColumnKind.CATEGORICAL) {
                    // a category: the most likely one among the draws against the truth, and the true one's share of the draws
                    String label = truth.label(i, j);
                    right += imp.mostLikely(i, j).equals(label) ? 1 : 0;
                    int same = 0;
                    for (Table draw : imp.draws()) {
                        same += draw.get(i, j) == truth.get(i, j) ? 1 : 0;
                    }
                    trueShare += same / (double) imp.draws().size();
                    rightByMostFrequent += truth.categories(j).get(mostFrequent(trainComplete, j)).equals(label) ? 1 : 0;
                } else if (Double.isNaN(hidden[i][j])) {
                    double t = truth.get(i, j);
                    double e = (imp.mean().get(i, j) - t) / colSd[j];
                    double em = (colMean[j] - t) / colSd[j];
                    se += e * e;
                    seMean += em * em;
                    if (t >= imp.lower().get(i, j) && t <= imp.upper().get(i, j)) {
                        covered++;
                    }
                }
            }
        }
        double rmse = Math.sqrt(se / Math.max(1, hiddenCount));
        double rmseMean = Math.sqrt(seMean / Math.max(1, hiddenCount));
        ObjectNode o = summary.putObject("imputation");
        o.put("rows", n);
        o.put("hiddenCells", hiddenCount);
        o.put("hiddenCategoryCells", hiddenCats);
        o.put("categoryAccuracy", right / (double) Math.max(1, hiddenCats));
        o.put("categoryTrueShare", trueShare / Math.max(1, hiddenCats));
        o.put("categoryAccuracyMostFrequent", rightByMostFrequent / (double) Math.max(1, hiddenCats));
        o.put("draws", MainJob.IMPUTATION_DRAWS);
        o.put("level", RowResults.LEVEL);
        o.put("rmseInColumnSd", rmse);
        o.put("rmseColumnMeanInColumnSd", rmseMean);
        o.put("coverage90", covered / (double) Math.max(1, hiddenCount));
        o.put("coverage90OfPerfectModel", imp.expectedCoverage());
        console.printf(Locale.ROOT, "4. Imputed %d cells hidden on purpose (truth known), %d draws each: RMSE %.3f column sd "
                        + "(column mean: %.3f); 90%% intervals cover %.1f%% (%.1f%% expected of a perfect model with %d draws)%n",
                hiddenCount, MainJob.IMPUTATION_DRAWS, rmse, rmseMean, 100.0 * covered / Math.max(1, hiddenCount),
                100.0 * imp.expectedCoverage(), MainJob.IMPUTATION_DRAWS);
        if (hiddenCats > 0) {
            console.printf(Locale.ROOT, "   %d hidden categories: the most likely of the draws is right in %d (%.1f%%; the training"
                            + " rows' most frequent category: %d); the true category's mean share of the draws %.2f%n",
                    hiddenCats, right, 100.0 * right / hiddenCats, rightByMostFrequent, trueShare / hiddenCats);
        }
    }

    /** The index of the most frequent category of a categorical column (the first on a tie). */
    private static int mostFrequent(Table t, int j) {
        int[] count = new int[t.categories(j).size()];
        for (int r = 0; r < t.rows(); r++) {
            double v = t.get(r, j);
            if (!Double.isNaN(v)) {
                count[(int) v]++;
            }
        }
        int best = 0;
        for (int k = 1; k < count.length; k++) {
            if (count[k] > count[best]) {
                best = k;
            }
        }
        return best;
    }

    /** The noise, in column sd, given to integer columns in the denoising step: held as observed, nearly exactly. */
    static final double INTEGER_NOISE_SHARE = 1e-3;

    static void denoising(DiffusionModel model, Table heldComplete, MainJob.Config c, PrintStream console, ObjectNode summary) {
        int n = Math.min(MainJob.STEP_ROWS, heldComplete.rows());
        Table truth = heldComplete.selectRows(Stats.spread(n, heldComplete.rows()));
        double[] noise = new double[truth.columns()];
        // integer columns (counts) get no reading noise: they are held nearly as observed, and not counted below;
        // binary and categorical columns get 0, and the library holds them as observed
        int[] cont = java.util.Arrays.stream(model.transform().modelledContinuous())
                .filter(j -> truth.kind(j) == ColumnKind.CONTINUOUS).toArray();
        for (int j : model.transform().modelledContinuous()) {
            noise[j] = INTEGER_NOISE_SHARE * Stats.sd(truth.column(j));
        }
        for (int j : cont) {
            noise[j] = c.noiseSd() != null ? c.noiseSd()[j] : MainJob.DEFAULT_NOISE_SHARE * Stats.sd(truth.column(j));
        }
        double[][] noisy = truth.toArray();
        SplittableRandom rng = new SplittableRandom(c.seed() + 23);
        for (double[] row : noisy) {
            for (int j : cont) {
                row[j] += noise[j] * rng.nextGaussian();
            }
        }
        Denoising d = model.denoise(truth.withRows(noisy), Defaults.denoising(noise).withDraws(8), c.seed());
        double before = 0;
        double after = 0;
        for (int i = 0; i < n; i++) {
            for (int j : cont) {
                double b = (noisy[i][j] - truth.get(i, j)) / noise[j];
                double a = (d.mean().get(i, j) - truth.get(i, j)) / noise[j];
                before += b * b;
                after += a * a;
            }
        }
        int cells = n * cont.length;
        ObjectNode o = summary.putObject("denoising");
        o.put("rows", n);
        o.put("cells", cells);
        if (c.noiseSd() == null) {
            o.put("noiseShareOfColumnSd", MainJob.DEFAULT_NOISE_SHARE);
        }
        o.put("rmseBeforeInNoiseSd", Math.sqrt(before / Math.max(1, cells)));
        o.put("rmseAfterInNoiseSd", Math.sqrt(after / Math.max(1, cells)));
        o.put("startStep", d.step());
        console.printf(Locale.ROOT, "5. Denoised %d readings (%d complete held-out rows x %d continuous columns) with known sensor noise: "
                        + "RMSE %.3f -> %.3f noise sd (chain from step %d)%n",
                cells, n, cont.length, Math.sqrt(before / Math.max(1, cells)), Math.sqrt(after / Math.max(1, cells)), d.step());
    }
}
