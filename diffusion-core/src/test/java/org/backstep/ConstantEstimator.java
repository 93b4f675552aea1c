package org.backstep;

import org.backstep.internal.chain.Estimator;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * An estimator whose every output is {@code value}, for tests that exercise the chain's own
 * arithmetic (closed-form kernels, divergence handling) without a network.
 *
 * @param inputs D, the columns it takes
 * @param outputs the columns it writes
 * @param value what it writes into every output cell
 */
record ConstantEstimator(int inputs, int outputs, float value) implements Estimator {

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        out.assign(value);
    }
}
