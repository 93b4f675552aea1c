package org.backstep.internal.flow;

import org.backstep.internal.chain.Estimator;
import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.NetworkTangents;

/**
 * The trace of the Jacobian of epsilon-hat over the continuous columns,
 * {@code tr(d eps-hat / d x_t) = sum_{c < Dc} d eps-hat_c(x_t, t) / d x_t,c}, per record: the
 * divergence the flow likelihood integrates (Song et al. 2021, eq. 39). An exact estimator of a
 * test implements this interface itself; a trained network gets it from {@link NetworkTangents},
 * plus the trace of its closed-form part ({@link ClosedFormPart#addTracesInPlace}: tr(A_t) for a
 * Gaussian, the mixture's own closed form for a mixture) when the model has one.
 */
public interface EpsilonTrace {

    /**
     * @param x rows x D model-space records as float32, row-major (not modified)
     * @param rows the records
     * @param step the training-schedule step t, 1..T
     * @param trace receives one value per record (modified)
     */
    void traces(float[] x, int rows, int step, double[] trace);

    /**
     * The trace of a model's estimator: its own, if it computes one (exact estimators of the
     * tests), or forward-mode tangents through the network when the estimator is the bare network.
     * This is the one place that decides; an estimator that forms epsilon-hat in another way must
     * say its trace here.
     *
     * @param parts the model's parts
     * @return the trace of its estimator
     * @throws IllegalArgumentException if the estimator has no known trace
     */
    static EpsilonTrace of(ModelParts parts) {
        Estimator e = parts.estimator();
        if (e instanceof EpsilonTrace own) {
            return own;
        }
        if (parts.network() != null && e.getClass() == NetworkEstimator.class) {
            NetworkTangents tangents = new NetworkTangents(parts.network(), parts.transform().modelledContinuous().length);
            ClosedFormPart baseline = e.closedForm();
            if (baseline == null || baseline.continuousColumns() == 0) {
                return tangents::traces;
            }
            // eps-hat = network + closed form: the traces add
            return (x, rows, step, trace) -> {
                tangents.traces(x, rows, step, trace);
                baseline.addTracesInPlace(x, x.length / rows, rows, step, trace);
            };
        }
        throw new IllegalArgumentException("the model's estimator (" + e.getClass().getSimpleName()
                + ") has no Jacobian trace; the flow likelihood needs one");
    }
}
