package org.backstep.posterior;

import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.ops.transforms.Transforms;

/**
 * log1p and expm1 on ND4J arrays without cancellation near 0. ND4J 1.0.0-M2.1 evaluates its own
 * log1p, expm1 and tanh as if through log(1 + x) and exp(x) - 1 (measured: in float32 log1p and
 * expm1 return 0 at x = 1e-8; in float64 they are off by 9e-5 relative at x = 1e-12), while its
 * atanh and log are accurate. So:
 * <pre>
 *   log1p(x) = 2 atanh(x / (2 + x))            for -1/2 &lt;= x &lt;= 1, else log(1 + x)
 *   expm1(x) = (u - 1) x / log(u), u = exp(x)  for |x| &lt;= 1 (x where u = 1), else exp(x) - 1
 * </pre>
 * The first follows from atanh(y) = log((1 + y)/(1 - y))/2 with y = x/(2 + x); the second is
 * Kahan's device (Higham, "Accuracy and Stability of Numerical Algorithms", 2nd ed., section 1.14.1):
 * the rounding error of u cancels between u - 1 and log(u). Away from 0 the plain forms are
 * accurate (for log(1 + x) with x near -1, 1 + x is exact). The branches are blended by a 0/1
 * mask and every intermediate is kept finite, so no NaN is made.
 */
final class Elementwise {

    private Elementwise() {
    }

    /**
     * log(1 + x) cell by cell.
     *
     * @param x values above -1 (not modified); a value at or below -1 counts as -1 plus one ulp,
     *     so the result stays finite (about -36.7 in float64, -15.9 in float32)
     * @return a new array of the same shape and type
     */
    static INDArray log1p(INDArray x) {
        DataType type = x.dataType();
        INDArray safe = Transforms.max(x, -1.0 + ulpOfOne(x), true);
        // 1 outside [-1/2, 1], where log(1 + x) is used
        INDArray plainBranch = safe.gt(1.0).castTo(type).addi(safe.lt(-0.5).castTo(type));
        INDArray ratio = Transforms.max(safe.div(safe.add(2.0)), -1.0 / 3.0, false);   // in [-1/3, 1) on the near branch
        ratio = Transforms.min(ratio, 0.5, false);                                      // finite atanh on either branch
        INDArray near = Transforms.atanh(ratio, false).muli(2.0);
        INDArray plain = Transforms.log(safe.addi(1.0), false);
        return near.addi(plain.subi(near).muli(plainBranch));
    }

    /**
     * exp(x) - 1 cell by cell.
     *
     * @param x values (not modified)
     * @return a new array of the same shape and type
     */
    static INDArray expm1(INDArray x) {
        DataType type = x.dataType();
        INDArray plainBranch = Transforms.abs(x, true).gt(1.0).castTo(type);            // 1 where |x| > 1
        INDArray small = Transforms.min(Transforms.max(x, -1.0, true), 1.0, false);
        INDArray u = Transforms.exp(small, true);
        INDArray unit = u.eq(1.0).castTo(type);                                         // 1 where u rounds to 1
        INDArray logU = Transforms.log(u, true).addi(unit);                             // never 0
        INDArray near = u.subi(1.0).divi(logU).muli(small).addi(unit.muli(small));      // x itself where u = 1
        INDArray plain = Transforms.exp(x, true).subi(1.0);
        return near.addi(plain.subi(near).muli(plainBranch));
    }

    /** @return the spacing of numbers just above 1 in the array's type */
    static double ulpOfOne(INDArray x) {
        return x.dataType() == DataType.FLOAT ? Math.ulp(1.0f) : Math.ulp(1.0);
    }
}
