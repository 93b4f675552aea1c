package org.backstep.quality;

import org.junit.jupiter.api.Test;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * The sample-quality figures of categorical columns: total variation between category shares and
 * the one-hot form used by distance-based statistics.
 */
class CategoricalQualityTest {

    /** One numeric column and one categorical column with K = 3. */
    private static final double[][] A = {{0.1, 0}, {0.4, 0}, {0.2, 1}, {0.9, 2}};
    private static final double[][] B = {{0.3, 1}, {0.5, 1}, {0.7, 1}, {0.8, 2}};

    @Test
    void totalVariationOfTheSharesBesideKolmogorovSmirnovOfTheNumbers() {
        double[] d = SampleQuality.columnDistances(A, B, 1, new int[] {3});
        // numeric column: the same as the Kolmogorov-Smirnov statistic (commons-math3)
        assertEquals(SampleQuality.kolmogorovSmirnov(new double[][] {{0.1}, {0.4}, {0.2}, {0.9}},
                new double[][] {{0.3}, {0.5}, {0.7}, {0.8}})[0], d[0], 0.0);
        // shares (1/2, 1/4, 1/4) against (0, 3/4, 1/4): TV = 1/2 (1/2 + 1/2 + 0) = 1/2, by hand from the
        // definition (Levin, Peres & Wilmer 2009, proposition 4.2)
        assertEquals(0.5, d[1], 1e-15);
    }

    @Test
    void theFigureOfACategoryDoesNotDependOnTheOrderOfItsLabels() {
        // relabel 0 -> 2, 1 -> 0, 2 -> 1 in both samples (common practice, no source: a distance between
        // distributions on a finite set is invariant under a bijection of the set)
        int[] map = {2, 0, 1};
        double[][] a = new double[A.length][];
        double[][] b = new double[B.length][];
        for (int i = 0; i < A.length; i++) {
            a[i] = new double[] {A[i][0], map[(int) A[i][1]]};
            b[i] = new double[] {B[i][0], map[(int) B[i][1]]};
        }
        assertArrayEquals(SampleQuality.columnDistances(A, B, 1, new int[] {3}),
                SampleQuality.columnDistances(a, b, 1, new int[] {3}), 1e-15);
    }

    @Test
    void oneHotPutsTwoDifferentCategoriesAtDistanceOne() {
        double[][] h = SampleQuality.oneHot(A, 1, new int[] {3});
        assertEquals(4, h[0].length);
        assertEquals(0.1, h[0][0], 0.0);
        // rows 0 and 1 share category 0: only the numbers differ; rows 1 and 2 differ by one category
        // swap, distance 1 as two binary values (our design: indicators scaled by 1/sqrt(2))
        double[] near = SampleQuality.nearestDistances(new double[][] {h[2]}, new double[][] {
                {h[2][0], h[1][1], h[1][2], h[1][3]}});
        assertEquals(1.0, near[0], 1e-12);
        // without categorical columns the rows come back as they are
        assertTrue(SampleQuality.oneHot(A, 2, new int[0]) == A);
    }

    @Test
    void aCellThatIsNotACategoryIndexIsRefusedByRowAndColumn() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> SampleQuality.columnDistances(A, new double[][] {{0.3, 1}, {0.4, 1.5}}, 1, new int[] {3}));
        assertEquals("row 1, column 1 is 1.5; expected a category index from 0 to 2", e.getMessage());
        IllegalArgumentException w = assertThrows(IllegalArgumentException.class,
                () -> SampleQuality.oneHot(new double[][] {{0.1, 3}}, 1, new int[] {3}));
        assertEquals("row 0, column 1 is 3.0; expected a category index from 0 to 2", w.getMessage());
    }
}
