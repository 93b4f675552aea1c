package org.backstep.internal.chain;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.SplittableRandom;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.ArrayRealVector;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.linear.RealVector;
import org.junit.jupiter.api.Test;

/**
 * The whitened replacement's own substitution ({@code ChainCoordinates.Pattern#solveInPlace})
 * against commons-math3's Cholesky solver, to the bit: the replacement's values (and so every
 * seeded imputation and denoising of a whitened model) are those it had with the commons-math3
 * solver.
 */
class PatternSolveTest {

    @Test
    void theSubstitutionGivesCommonsMathsSolutionToTheBit() {
        SplittableRandom random = new SplittableRandom(17);
        for (int n = 1; n <= 12; n++) {
            for (int trial = 0; trial < 20; trial++) {
                // a random covariance A A^T / n + 0.1 I (positive definite; common practice, no source)
                double[][] a = new double[n][n];
                for (double[] row : a) {
                    for (int k = 0; k < n; k++) {
                        row[k] = random.nextGaussian();
                    }
                }
                RealMatrix m = new Array2DRowRealMatrix(n, n);
                for (int i = 0; i < n; i++) {
                    for (int j = 0; j < n; j++) {
                        double s = i == j ? 0.1 : 0.0;
                        for (int k = 0; k < n; k++) {
                            s += a[i][k] * a[j][k] / n;
                        }
                        m.setEntry(i, j, s);
                    }
                }
                CholeskyDecomposition cholesky = new CholeskyDecomposition(m, 1e-12, 1e-300);
                int[] obs = new int[n];
                double[][] wInv = new double[n][n];
                for (int i = 0; i < n; i++) {
                    obs[i] = i;
                    wInv[i][i] = 1.0;
                }
                ChainCoordinates.Pattern pattern = new ChainCoordinates.Pattern(obs, cholesky.getLT().getData(), wInv);
                double[] b = new double[n + 3];    // longer than the system, as the replacement's buffer is
                for (int i = 0; i < n; i++) {
                    b[i] = random.nextGaussian() * Math.pow(10, random.nextInt(7) - 3);
                }
                RealVector expected = cholesky.getSolver().solve(new ArrayRealVector(b, 0, n));
                pattern.solveInPlace(b);
                for (int i = 0; i < n; i++) {
                    assertEquals(Double.doubleToRawLongBits(expected.getEntry(i)), Double.doubleToRawLongBits(b[i]),
                            "n = " + n + ", trial " + trial + ", entry " + i);
                }
            }
        }
    }
}
