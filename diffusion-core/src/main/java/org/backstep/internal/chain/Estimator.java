package org.backstep.internal.chain;

import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * What the reverse process asks of a learned (or exact) estimator: from a batch of noisy records
 * x_t in model space and the step t of each row, predict
 * <pre>
 *   columns [0, Dc)            epsilon-hat for each continuous column (Ho et al. 2020, eq. 11)
 *   columns [Dc, 2 Dc)         v, the log-variance interpolation of each continuous column
 *                              (Nichol &amp; Dhariwal 2021, eq. 15), present only with learned variances
 *   the next Db columns        the logit of P(x_0 = 1 | x_t) for each binary column
 *   then K_j columns each      the logits of x_0's category for each categorical column j
 *                              (Hoogeboom et al. 2021, section 4)
 * </pre>
 * where Dc and Db count the diffused continuous (with integer) and binary columns. Its input is
 * x_t with each categorical cell one-hot ({@link Chain#encodeInput}): Dc + Db + sum_j K_j columns. The trained network of a
 * {@code org.backstep.DiffusionModel} is one implementation; tests supply exact closed-form estimators through
 * the same interface, so they run the same bound and sampling code.
 */
public interface Estimator {

    /** @return the input width, Dc + Db + sum_j K_j (D = Dc + Db without categorical columns) */
    int inputs();

    /** @return the number of output columns, Dc (1 + [learned variance]) + Db + sum_j K_j */
    int outputs();

    /**
     * Predicts for every row. Must be safe to call from several threads at once.
     *
     * @param xt rows x {@link #inputs()} float32, not modified
     * @param steps the step of each row, 1..T of the training schedule, not modified
     * @param out rows x {@link #outputs()} float32, written in place
     */
    void predict(INDArray xt, int[] steps, INDArray out);

    /**
     * @return the closed-form part ({@link GaussianBaseline}) that the predictions include, or null
     *     (the default); the exact bound uses it as a control variate
     */
    default GaussianBaseline baseline() {
        return null;
    }

    /**
     * @return the closed-form part ({@link ClosedFormPart}: a Gaussian or a mixture) that the
     *     predictions include, or null (the default: {@link #baseline()})
     */
    default ClosedFormPart closedForm() {
        return baseline();
    }
}
