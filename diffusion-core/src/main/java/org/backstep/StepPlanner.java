package org.backstep;

import org.backstep.option.SamplingPlan;
import org.backstep.report.BoundReport;
import org.backstep.report.StepPlan;

import org.backstep.quality.EnergyTest;
import org.backstep.quality.SampleQuality;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

/** Evaluates candidate step counts of a fitted model on held-out rows; see {@link StepPlan}. */
final class StepPlanner {

    /** Rows drawn per candidate for the sample-quality statistics (and held-out rows used, at most). */
    static final int QUALITY_ROWS = 1000;
    /** Permutations of the energy test. */
    static final int PERMUTATIONS = 199;

    private StepPlanner() {
    }

    static StepPlan plan(DiffusionModel model, Table heldOut, double tolerance, long seed, int[] counts) {
        int[] ks = counts.clone();
        Arrays.sort(ks);
        for (int i = 0; i < ks.length; i++) {
            if (ks[i] < 1 || ks[i] > model.steps()) {
                throw new IllegalArgumentException("step count " + ks[i] + " is outside 1.." + model.steps());
            }
            if (i > 0 && ks[i] == ks[i - 1]) {
                throw new IllegalArgumentException("step count " + ks[i] + " is listed twice");
            }
        }
        Table held = heldOut.rows() > QUALITY_ROWS ? heldOut.selectRows(evenlySpaced(QUALITY_ROWS, heldOut.rows())) : heldOut;
        double[][] heldModel = model.transform().toModelSpace(held);
        List<StepPlan.Row> rows = new ArrayList<>();
        for (int k : ks) {
            BoundReport bound = model.bound(held, k, seed);
            long start = System.nanoTime();
            Table samples = model.sample(held.rows(), SamplingPlan.ancestral(k), seed + k);
            double millis = (System.nanoTime() - start) / 1e6 * 1000.0 / held.rows();
            double[][] sampleModel = model.transform().toModelSpace(samples);
            EnergyTest energy = EnergyTest.run(sampleModel, heldModel, PERMUTATIONS, seed);
            double maxKs = Arrays.stream(SampleQuality.kolmogorovSmirnov(sampleModel, heldModel)).max().orElse(0.0);
            rows.add(new StepPlan.Row(k, bound.meanNats() / bound.dimensions(), energy.energyDistance(),
                    energy.pValue(), maxKs, millis));
        }
        StepPlan.Row best = rows.stream().min((a, b) -> Double.compare(a.boundNatsPerDimension(), b.boundNatsPerDimension()))
                .orElseThrow();
        StepPlan.Row pick = rows.stream().filter(r -> r.boundNatsPerDimension() <= best.boundNatsPerDimension() + tolerance)
                .findFirst().orElse(best);
        StepPlan.Row largest = rows.get(rows.size() - 1);
        String reason = String.format(Locale.ROOT,
                "%d steps: its held-out bound, %.4f nats per dimension, is within %.4f of the best (%.4f at %d steps), "
                        + "and it draws 1,000 samples in %.0f ms against %.0f ms at %d steps.",
                pick.steps(), pick.boundNatsPerDimension(), tolerance, best.boundNatsPerDimension(), best.steps(),
                pick.millisPer1000(), largest.millisPer1000(), largest.steps());
        return new StepPlan(rows, tolerance, pick.steps(), reason);
    }

    /** n row indices spread evenly over 0..total-1, so that a table sorted by time or unit is not cut to its start. */
    static int[] evenlySpaced(int n, int total) {
        int[] r = new int[n];
        for (int i = 0; i < n; i++) {
            r[i] = (int) ((long) i * total / n);
        }
        return r;
    }
}
