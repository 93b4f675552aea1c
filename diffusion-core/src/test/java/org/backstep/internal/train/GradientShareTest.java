package org.backstep.internal.train;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;
import java.util.Set;

import org.backstep.Backstep;
import org.backstep.option.Baseline;
import org.backstep.option.FitOptions;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

/** The data-parallel seam: a share's gradient is its part of the minibatch mean, and training on it learns. */
class GradientShareTest {

    /**
     * The same float32 forward and backward passes with the output gradient scaled by h/B before
     * rounding to float: the weight gradients agree to float32 rounding of sums over a few hundred
     * terms, about 1e-5 relative; 1e-4 of the largest component.
     */
    private static final double FLOAT32_TOL = 1e-4;

    private static Table rows(int n) {
        // common practice, no source: two correlated columns and a binary one
        double[][] x = new double[n][];
        java.util.SplittableRandom r = new java.util.SplittableRandom(4);
        for (int i = 0; i < n; i++) {
            double a = r.nextGaussian();
            x[i] = new double[] {a, 0.8 * a + 0.6 * r.nextGaussian(), a > 0.5 ? 1 : 0};
        }
        return Table.of(List.of("a", "b", "c"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS,
                ColumnKind.BINARY), x);
    }

    @Test
    void aSharesGradientIsItsPartOfTheMinibatchMean() {
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).steps(20).hidden(16, 16).seed(3).threads(1).options();
        Table t = rows(64);
        TableTransform transform = TableTransform.fit(t, Set.of());
        float[] w = GradientShare.initialWeights(options, transform);
        float[] x0 = GradientShare.modelRows(transform, t.selectRows(java.util.stream.IntStream.range(0, 16).toArray()));
        float[] own = new float[w.length];
        float[] share = new float[w.length];
        try (GradientShare alone = GradientShare.of(options, transform, 16, 16, 1);
             GradientShare part = GradientShare.of(options, transform, 16, 64, 1)) {
            double lossAlone = alone.addGradientInPlace(w, x0, 9L, own);
            double lossPart = part.addGradientInPlace(w, x0, 9L, share);
            // the same rows and draws, weighted 1/64 instead of 1/16 per row (LossGradient's mean)
            assertEquals(lossAlone / 4, lossPart, 1e-12 * Math.abs(lossAlone));
            double largest = 0;
            for (float g : own) {
                largest = Math.max(largest, Math.abs(g));
            }
            assertTrue(largest > 0);
            for (int i = 0; i < w.length; i++) {
                assertEquals(own[i] / 4, share[i], FLOAT32_TOL * largest, "parameter " + i);
            }
        }
    }

    @Test
    void adamOnSummedShareGradientsLowersTheBound() {
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).steps(20).hidden(16, 16).seed(3).threads(1).options();
        Table t = rows(512);
        TableTransform transform = TableTransform.fit(t, Set.of());
        float[] x0 = GradientShare.modelRows(transform, t);
        float[] w = GradientShare.initialWeights(options, transform);
        var adam = GradientShare.optimizer(options, transform);
        double before = GradientShare.bound(options, transform, w, x0, 512, 4, 1L, 1);
        int d = transform.modelColumns();
        try (GradientShare first = GradientShare.of(options, transform, 32, 64, 1);
             GradientShare second = GradientShare.of(options, transform, 32, 64, 1)) {
            for (int step = 0; step < 200; step++) {
                float[] g = new float[w.length];
                int from = (step * 64) % 512;
                first.addGradientInPlace(w, java.util.Arrays.copyOfRange(x0, from * d, (from + 32) * d), step, g);
                second.addGradientInPlace(w, java.util.Arrays.copyOfRange(x0, (from + 32) * d, (from + 64) * d),
                        1000 + step, g);
                var p = org.nd4j.linalg.factory.Nd4j.createFromArray(w);
                adam.stepInPlace(p, org.nd4j.linalg.factory.Nd4j.createFromArray(g));
                w = p.toFloatVector();
            }
        }
        double after = GradientShare.bound(options, transform, w, x0, 512, 4, 1L, 1);
        // common practice, no source: 200 Adam steps on the summed gradients lower the bound
        assertTrue(after < before - 0.5, "bound " + before + " -> " + after);
    }

    @Test
    void refusesOptionsItDoesNotSupport() {
        FitOptions baseline = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(Baseline.STANDARD_NORMAL).options();
        TableTransform transform = TableTransform.fit(rows(8), Set.of());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> GradientShare.of(baseline, transform, 4, 8, 1));
        assertTrue(e.getMessage().contains("no baseline and uniform steps only"), e.getMessage());
    }

    @Test
    void refusesCoordinatesOtherThanStandardized() {
        FitOptions whitened = Backstep.builder().baseline(org.backstep.option.Baseline.NONE).coordinates(org.backstep.option.Coordinates.WHITENED).options();
        TableTransform transform = TableTransform.fit(rows(8), Set.of());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> GradientShare.of(whitened, transform, 4, 8, 1));
        assertTrue(e.getMessage().contains("options.coordinates is WHITENED"), e.getMessage());
    }

    @Test
    void refusesRowsWithMissingCells() {
        Table gappy = Table.of(List.of("a", "b"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS),
                new double[][] {{1, 2}, {Double.NaN, 3}, {2, 5}});
        TableTransform transform = TableTransform.fit(gappy, Set.of());
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> GradientShare.modelRows(transform, gappy));
        assertTrue(e.getMessage().startsWith("rows has missing cells"), e.getMessage());
    }
}
