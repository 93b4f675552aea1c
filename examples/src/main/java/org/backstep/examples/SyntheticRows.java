package org.backstep.examples;

import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;
import org.backstep.option.SamplingPlan;
import org.backstep.quality.EnergyTest;
import org.backstep.quality.SampleQuality;
import org.backstep.table.Table;

import java.io.PrintStream;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/**
 * Step 6 of the main job: synthetic rows, their quality against held-out rows (energy test,
 * per-column statistics, Kolmogorov-Smirnov; for a categorical column the share of each category)
 * and a memorization check (each row's distance to its
 * closest training row, synthetic against held-out).
 */
final class SyntheticRows {

    /** Training rows the nearest-row distances are measured against, at most (a spread subsample). */
    static final int TRAINING_ROWS_COMPARED = 4000;
    /** Permutations of the energy test. */
    static final int PERMUTATIONS = 199;

    private SyntheticRows() {
    }

    /**
     * Draws as many synthetic rows as {@code held} has, compares them, prints the figures and puts
     * them under "samples" in the summary.
     *
     * @param model the model
     * @param held complete held-out rows to compare with
     * @param trainModel the complete training rows in model space
     * @return the synthetic rows, in original units
     */
    static Table run(DiffusionModel model, Table held, double[][] trainModel, long seed, PrintStream console, ObjectNode summary) {
        int n = held.rows();
        Table samples = model.sample(n, SamplingPlan.ancestral(), seed);
        double[][] sm = model.transform().toModelSpace(samples);
        double[][] hm = model.transform().toModelSpace(held);
        // a category index is not a number: categorical columns one-hot for the distances, and the total
        // variation of their shares in place of a Kolmogorov-Smirnov statistic
        int[] categories = model.transform().modelledCategories();
        int numeric = sm[0].length - categories.length;
        double[][] smDistances = SampleQuality.oneHot(sm, numeric, categories);
        double[][] hmDistances = SampleQuality.oneHot(hm, numeric, categories);
        EnergyTest energy = EnergyTest.run(smDistances, hmDistances, PERMUTATIONS, seed);
        double[] ks = SampleQuality.columnDistances(sm, hm, numeric, categories);
        double[][] trainSub = SampleQuality.oneHot(Stats.subsample(trainModel, TRAINING_ROWS_COMPARED, seed), numeric,
                categories);
        double[] synthNear = SampleQuality.nearestDistances(smDistances, trainSub);
        double[] heldNear = SampleQuality.nearestDistances(hmDistances, trainSub);
        double heldP01 = Stats.quantile(heldNear, 0.01);
        long closer = Arrays.stream(synthNear).filter(v -> v < heldP01).count();
        double maxKs = Arrays.stream(ks).max().orElse(0);
        ObjectNode s = summary.putObject("samples");
        s.put("count", n);
        s.put("heldOutRows", n);
        s.put("trainingRowsCompared", trainSub.length);
        s.put("energyDistance", energy.energyDistance());
        s.put("energyPValue", energy.pValue());
        s.put("maxKs", maxKs);
        s.put("medianNearestTrainingDistanceSynthetic", Stats.quantile(synthNear, 0.5));
        s.put("medianNearestTrainingDistanceHeldOut", Stats.quantile(heldNear, 0.5));
        s.put("shareCloserThanHeldOutFirstPercentile", closer / (double) n);
        console.printf(Locale.ROOT, "6. %d synthetic rows against %d complete held-out rows: energy distance %.4f (permutation p = %.3f), "
                + "largest per-column KS %.3f%s%n", n, n, energy.energyDistance(), energy.pValue(), maxKs,
                categories.length == 0 ? "" : " (for a categorical column, the total variation of its shares;"
                        + " categories one-hot in the distances)");
        console.printf(Locale.ROOT, "   memorization check: median distance to the closest training row %.3f (synthetic) vs %.3f (held-out); "
                        + "%.1f%% of synthetic rows are closer than the closest 1%% of held-out rows%n",
                Stats.quantile(synthNear, 0.5), Stats.quantile(heldNear, 0.5), 100.0 * closer / n);
        ArrayNode cols = s.putArray("columns");
        console.printf(Locale.ROOT, "   %-16s %10s %10s %10s %10s %8s%n", "column", "mean data", "mean synth", "sd data", "sd synth", "KS");
        int[] modelled = Stats.concat(model.transform().modelledContinuous(), model.transform().modelledBinary());
        for (int j = 0; j < modelled.length; j++) {
            int col = modelled[j];
            double[] dv = held.column(col);
            double[] sv = samples.column(col);
            ObjectNode o = cols.addObject();
            o.put("column", held.name(col));
            o.put("meanData", Stats.mean(dv));
            o.put("meanSynthetic", Stats.mean(sv));
            o.put("sdData", Stats.sd(dv));
            o.put("sdSynthetic", Stats.sd(sv));
            o.put("ks", ks[j]);
            console.printf(Locale.ROOT, "   %-16s %10.3f %10.3f %10.3f %10.3f %8.3f%n", held.name(col), Stats.mean(dv),
                    Stats.mean(sv), Stats.sd(dv), Stats.sd(sv), ks[j]);
        }
        int[] cats = model.transform().modelledCategorical();
        if (cats.length > 0) {
            // a category has no mean or sd: the share of each label, data beside synthetic
            ArrayNode shares = s.putArray("categories");
            console.printf(Locale.ROOT, "   %-16s %-20s %10s %10s%n", "column", "category", "share data", "share synth");
            for (int col : cats) {
                double[] dv = shares(held, col);
                double[] sv = shares(samples, col);
                List<String> labels = held.categories(col);
                for (int k = 0; k < labels.size(); k++) {
                    ObjectNode o = shares.addObject();
                    o.put("column", held.name(col));
                    o.put("category", labels.get(k));
                    o.put("shareData", dv[k]);
                    o.put("shareSynthetic", sv[k]);
                    console.printf(Locale.ROOT, "   %-16s %-20s %10.3f %10.3f%n", k == 0 ? held.name(col) : "", labels.get(k), dv[k], sv[k]);
                }
            }
        }
        return samples;
    }

    /** The share of each category of a categorical column among the rows (in the column's label order). */
    static double[] shares(Table t, int col) {
        double[] out = new double[t.categories(col).size()];
        for (int r = 0; r < t.rows(); r++) {
            out[(int) t.get(r, col)] += 1.0 / t.rows();
        }
        return out;
    }
}
