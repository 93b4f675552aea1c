package org.backstep.examples;

import org.backstep.Defaults;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.table.Table;

import java.io.PrintStream;
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
        int[] cont = model.transform().modelledContinuous();
        int hiddenCount = 0;
        for (double[] row : hidden) {
            int j = cont.length > 0 ? cont[rng.nextInt(cont.length)] : rng.nextInt(row.length);
            row[j] = Double.NaN;
            hiddenCount++;
        }
        Table masked = truth.withRows(hidden);
        Imputation imp = model.impute(masked, Defaults.imputation().withDraws(MainJob.IMPUTATION_DRAWS).withLevel(0.9), c.seed());
        double se = 0;
        double seMean = 0;
        int covered = 0;
        double[] colMean = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colMean[j] = Stats.mean(trainComplete.column(j));
        }
        double[] colSd = new double[truth.columns()];
        for (int j = 0; j < truth.columns(); j++) {
            colSd[j] = Stats.sd(trainComplete.column(j));
        }
        for (int i = 0; i < n; i++) {
            for (int j = 0; j < truth.columns(); j++) {
                if (Double.isNaN(hidden[i][j])) {
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
        double rmse = Math.sqrt(se / hiddenCount);
        double rmseMean = Math.sqrt(seMean / hiddenCount);
        ObjectNode o = summary.putObject("imputation");
        o.put("rows", n);
        o.put("hiddenCells", hiddenCount);
        o.put("draws", MainJob.IMPUTATION_DRAWS);
        o.put("level", 0.9);
        o.put("rmseInColumnSd", rmse);
        o.put("rmseColumnMeanInColumnSd", rmseMean);
        o.put("coverage90", covered / (double) hiddenCount);
        o.put("coverage90OfPerfectModel", imp.expectedCoverage());
        console.printf(Locale.ROOT, "4. Imputed %d cells hidden on purpose (truth known), %d draws each: RMSE %.3f column sd "
                        + "(column mean: %.3f); 90%% intervals cover %.1f%% (%.1f%% expected of a perfect model with %d draws)%n",
                hiddenCount, MainJob.IMPUTATION_DRAWS, rmse, rmseMean, 100.0 * covered / hiddenCount,
                100.0 * imp.expectedCoverage(), MainJob.IMPUTATION_DRAWS);
    }

    static void denoising(DiffusionModel model, Table heldComplete, MainJob.Config c, PrintStream console, ObjectNode summary) {
        int n = Math.min(MainJob.STEP_ROWS, heldComplete.rows());
        Table truth = heldComplete.selectRows(Stats.spread(n, heldComplete.rows()));
        double[] noise = new double[truth.columns()];
        int[] cont = model.transform().modelledContinuous();
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
