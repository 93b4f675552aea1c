package org.backstep.internal.chain;

import org.backstep.internal.net.ReverseNetwork;
import org.nd4j.linalg.api.ndarray.INDArray;

/** The trained network seen as an {@link Estimator}. */
public final class NetworkEstimator implements Estimator {

    final ReverseNetwork network;

    public NetworkEstimator(ReverseNetwork network) {
        this.network = network;
    }

    @Override
    public int inputs() {
        return network.shape().inputs();
    }

    @Override
    public int outputs() {
        return network.shape().outputs();
    }

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        network.predict(xt, steps, out);
    }
}
