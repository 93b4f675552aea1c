package org.backstep.internal.net;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.RealMatrix;
import org.bytedeco.javacpp.FloatPointer;
import org.junit.jupiter.api.Test;

/** The sgemm bridge and its zeroing path against commons-math3's matrix product. */
class NativeMathTest {

    /** Float32 products of a few terms of size about 1, summed in a different order. */
    private static final double PRODUCT_TOLERANCE = 1e-5;

    @Test
    void zeroTouchesExactlyTheRequestedFloats() {
        FloatPointer base = new FloatPointer(new float[] {1, 1, 1, 1, 1, 1, 1, 1, 1, 1});
        NativeMath.zero(NativeMath.offset(base, 3), 4);
        float[] out = new float[10];
        base.get(out);
        // common practice, no source: floats 3..6 zeroed, the rest untouched
        assertEquals("[1.0, 1.0, 1.0, 0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0]", java.util.Arrays.toString(out));
    }

    @Test
    void overwritingProductIgnoresWhatCHeldAndMatchesCommonsMath() {
        int m = 5;
        int k = 7;
        int n = 3;
        double[][] a = new double[m][k];
        double[][] b = new double[k][n];
        float[] af = new float[m * k];
        float[] bf = new float[k * n];
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < k; j++) {
                a[i][j] = (float) Math.sin(1.0 + i * k + j);
                af[i * k + j] = (float) a[i][j];
            }
        }
        for (int i = 0; i < k; i++) {
            for (int j = 0; j < n; j++) {
                b[i][j] = (float) Math.cos(2.0 + i * n + j);
                bf[i * n + j] = (float) b[i][j];
            }
        }
        float[] cf = new float[2 + m * n];
        java.util.Arrays.fill(cf, Float.NaN);
        FloatPointer c = new FloatPointer(cf);
        NativeMath.gemm(false, false, m, n, k, new FloatPointer(af), k, new FloatPointer(bf), n, 0f,
                NativeMath.offset(c, 2), n);
        float[] out = new float[cf.length];
        c.get(out);
        // reference: commons-math3 RealMatrix.multiply; with beta = 0 the old C (NaN) is not read
        // (BLAS sgemm semantics, netlib reference BLAS documentation)
        RealMatrix expected = new Array2DRowRealMatrix(a).multiply(new Array2DRowRealMatrix(b));
        assertTrue(Float.isNaN(out[0]) && Float.isNaN(out[1]), "floats before C must be untouched");
        for (int i = 0; i < m; i++) {
            for (int j = 0; j < n; j++) {
                assertEquals(expected.getEntry(i, j), out[2 + i * n + j], PRODUCT_TOLERANCE, "C[" + i + "][" + j + "]");
            }
        }
    }
}
