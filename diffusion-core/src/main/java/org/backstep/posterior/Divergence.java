package org.backstep.posterior;

import org.backstep.schedule.Require;
import org.nd4j.linalg.api.buffer.DataType;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.ops.transforms.Transforms;

/**
 * KL divergences and log densities of diagonal Gaussians and Bernoullis, in nats: the terms of the
 * variational bound of a diffusion model (Ho et al. 2020, eq. 5; Sohl-Dickstein et al. 2015,
 * eq. 14). Scalar forms in double; row forms take rows = records, columns = dimensions and return
 * the sum over each row's columns as a new vector of length rows, in the inputs' data type. The row
 * forms do not look for NaN in their inputs: NaN in gives NaN out for that row.
 */
public final class Divergence {

    /**
     * How far from 0 and 1 the second Bernoulli's probability q is clamped in double (scalar forms
     * and float64 rows), so that KL(Bern(p) || Bern(q)) stays finite: q in [1e-12, 1 - 1e-12].
     */
    public static final double PROBABILITY_CLAMP = 1e-12;

    /**
     * The same clamp for float32 rows, where 1 - 1e-12 rounds to 1: q in [1e-6, 1 - 1e-6], both
     * ends as float32 rounds them (1 - q is then 1.013e-6 at the top). The float32 and double forms
     * therefore differ where q is within about 1e-6 of 0 or 1.
     */
    public static final double PROBABILITY_CLAMP_FLOAT = 1e-6;

    /** log(2 pi). */
    private static final double LOG_TWO_PI = Math.log(2.0 * Math.PI);

    private Divergence() {
    }

    // ------------------------------------------------------------------ scalar forms

    /**
     * KL(N(mean1, exp(logVar1)) || N(mean2, exp(logVar2))) in nats, the closed form
     * <pre>
     *   KL = 1/2 [ log(v2/v1) + v1/v2 + (mean1 - mean2)^2 / v2 - 1 ]
     *      = 1/2 [ expm1(d) - d + (mean1 - mean2)^2 exp(-logVar2) ],   d = logVar1 - logVar2
     * </pre>
     * (e.g. Kingma &amp; Welling 2014, "Auto-Encoding Variational Bayes", appendix B, for v2 = 1;
     * Ho et al. 2020, section 3, compute every L_{t-1} this way.) The second line has no
     * cancellation when the variances are close.
     *
     * @param mean1 mean of the first Gaussian (finite)
     * @param logVar1 log variance of the first (finite)
     * @param mean2 mean of the second (finite)
     * @param logVar2 log variance of the second (finite)
     * @return the divergence, at least 0
     * @throws IllegalArgumentException naming the first argument that is not finite
     */
    public static double gaussianKl(double mean1, double logVar1, double mean2, double logVar2) {
        Require.finite("mean1", mean1);
        Require.finite("logVar1", logVar1);
        Require.finite("mean2", mean2);
        Require.finite("logVar2", logVar2);
        double d = logVar1 - logVar2;
        double diff = mean1 - mean2;
        return 0.5 * (Math.expm1(d) - d + diff * diff * Math.exp(-logVar2));
    }

    /**
     * KL(Bern(p) || Bern(q)) in nats: p log(p/q) + (1 - p) log((1 - p)/(1 - q)), with 0 log 0 = 0
     * so that p = 0 and p = 1 are exact (relative entropy, Cover &amp; Thomas, "Elements of
     * Information Theory", section 2.3). q is first clamped to [{@link #PROBABILITY_CLAMP},
     * 1 - {@link #PROBABILITY_CLAMP}], so a model that is certain and wrong costs about 27.6 nats,
     * not infinity. Evaluated as
     * <pre>
     *   p log1p((p - q)/q) + (1 - p) log1p((q - p)/(1 - q))
     * </pre>
     * which keeps its relative precision when p is close to q, where the divergence is about
     * (p - q)^2 / (2 q (1 - q)) and the two logarithms of the first line nearly cancel.
     *
     * @param p the first probability of 1, in [0, 1]
     * @param q the second probability of 1, in [0, 1]
     * @return the divergence, at least 0
     * @throws IllegalArgumentException naming p or q if outside [0, 1] or NaN
     */
    public static double bernoulliKl(double p, double q) {
        Require.inClosed("p", p, 0.0, 1.0);
        Require.inClosed("q", q, 0.0, 1.0);
        double qc = Math.min(Math.max(q, PROBABILITY_CLAMP), 1.0 - PROBABILITY_CLAMP);
        double one = p == 0.0 ? 0.0 : p * Math.log1p((p - qc) / qc);
        double zero = p == 1.0 ? 0.0 : (1.0 - p) * Math.log1p((qc - p) / (1.0 - qc));
        return Math.max(0.0, one + zero);
    }

    /**
     * log N(x; mean, exp(logVar)) = -1/2 [ log(2 pi) + logVar + (x - mean)^2 exp(-logVar) ], the
     * logarithm of the normal density.
     *
     * @param x the point (finite)
     * @param mean the mean (finite)
     * @param logVar the log variance (finite)
     * @return the log density in nats
     * @throws IllegalArgumentException naming the first argument that is not finite
     */
    public static double gaussianLogDensity(double x, double mean, double logVar) {
        Require.finite("x", x);
        Require.finite("mean", mean);
        Require.finite("logVar", logVar);
        double diff = x - mean;
        return -0.5 * (LOG_TWO_PI + logVar + diff * diff * Math.exp(-logVar));
    }

    // ------------------------------------------------------------------ row forms

    /**
     * Per-row sum of {@link #gaussianKl(double, double, double, double)} over the columns. Each
     * log variance is either a column (rows x 1, one value for the whole row, broadcast) or has the
     * full shape of the means.
     *
     * @param mean1 rows x D (not modified)
     * @param logVar1 rows x 1 or rows x D (not modified)
     * @param mean2 rows x D (not modified)
     * @param logVar2 rows x 1 or rows x D (not modified)
     * @return a new vector of length rows
     * @throws IllegalArgumentException on a shape or data type mismatch, carrying both shapes
     */
    public static INDArray gaussianKlRows(INDArray mean1, INDArray logVar1, INDArray mean2, INDArray logVar2) {
        Rows.requireBatch("mean1", mean1);
        Rows.requireSameShape("mean1", mean1, "mean2", mean2);
        boolean col1 = Rows.requireColumnOrFull("mean1", mean1, "logVar1", logVar1);
        boolean col2 = Rows.requireColumnOrFull("mean1", mean1, "logVar2", logVar2);
        long rows = mean1.rows();
        long dims = mean1.columns();

        INDArray sq = mean1.sub(mean2);
        sq.muli(sq);                                            // (mean1 - mean2)^2
        INDArray precision2 = Transforms.exp(logVar2.neg(), false);
        if (col2) {
            sq.muliColumnVector(precision2);
        } else {
            sq.muli(precision2);
        }
        INDArray d;                                             // logVar1 - logVar2
        if (col1 && col2) {
            d = logVar1.sub(logVar2);
        } else if (col1) {
            d = logVar2.subColumnVector(logVar1).negi();
        } else if (col2) {
            d = logVar1.subColumnVector(logVar2);
        } else {
            d = logVar1.sub(logVar2);
        }
        INDArray varTerm = Elementwise.expm1(d).subi(d);         // expm1(d) - d, accurate expm1
        INDArray sum = sq.sum(1);
        if (col1 && col2) {
            sum.addi(varTerm.reshape(rows).muli(dims));
        } else {
            sum.addi(varTerm.sum(1));
        }
        return sum.muli(0.5);
    }

    /**
     * Per-row sum of {@link #bernoulliKl(double, double)} over the columns, in the same log1p form,
     * with q clamped to [c, 1 - c] where c is {@link #PROBABILITY_CLAMP} for float64 and
     * {@link #PROBABILITY_CLAMP_FLOAT} for float32; p = 0 and p = 1 contribute exactly 0.
     *
     * @param p rows x D probabilities in [0, 1] (not modified)
     * @param q rows x D probabilities in [0, 1] (not modified)
     * @return a new vector of length rows
     * @throws IllegalArgumentException on a shape or data type mismatch, or values outside [0, 1]
     */
    public static INDArray bernoulliKlRows(INDArray p, INDArray q) {
        Rows.requireBatch("p", p);
        Rows.requireSameShape("p", p, "q", q);
        Rows.requireProbabilities("p", p);
        Rows.requireProbabilities("q", q);
        boolean single = p.dataType() == DataType.FLOAT;
        double clamp = single ? PROBABILITY_CLAMP_FLOAT : PROBABILITY_CLAMP;

        INDArray qc = Transforms.min(Transforms.max(q, clamp, true), 1.0 - clamp, false);
        INDArray notP = p.rsub(1.0);
        INDArray notQ = qc.rsub(1.0);
        // p log1p((p - q)/q); at p = 0 the argument is -1, which log1p keeps finite, so the term is 0
        INDArray one = Elementwise.log1p(p.sub(qc).divi(qc)).muli(p);
        // (1 - p) log1p((q - p)/(1 - q))
        INDArray zero = Elementwise.log1p(qc.subi(p).divi(notQ)).muli(notP);
        return Transforms.max(one.addi(zero).sum(1), 0.0, false);
    }

    /**
     * Per-row sum of {@link #gaussianLogDensity(double, double, double)} over the columns: the log
     * density of a diagonal Gaussian. The log variance is a column (rows x 1, broadcast) or full.
     *
     * @param x rows x D (not modified)
     * @param mean rows x D (not modified)
     * @param logVar rows x 1 or rows x D (not modified)
     * @return a new vector of length rows
     * @throws IllegalArgumentException on a shape or data type mismatch, carrying both shapes
     */
    public static INDArray gaussianLogDensityRows(INDArray x, INDArray mean, INDArray logVar) {
        Rows.requireBatch("x", x);
        Rows.requireSameShape("x", x, "mean", mean);
        boolean column = Rows.requireColumnOrFull("x", x, "logVar", logVar);
        long rows = x.rows();
        long dims = x.columns();

        INDArray sq = x.sub(mean);
        sq.muli(sq);
        INDArray precision = Transforms.exp(logVar.neg(), false);
        INDArray sum;
        if (column) {
            sum = sq.muliColumnVector(precision).sum(1).addi(logVar.reshape(rows).mul(dims));
        } else {
            sum = sq.muli(precision).addi(logVar).sum(1);
        }
        return sum.addi(dims * LOG_TWO_PI).muli(-0.5);
    }
}
