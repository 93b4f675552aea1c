package org.backstep.internal.chain;

import org.backstep.internal.net.ReverseNetwork;
import org.nd4j.linalg.api.ndarray.INDArray;
import org.nd4j.linalg.factory.Nd4j;

/**
 * The trained network seen as an {@link Estimator}: its output, plus the closed-form part of a
 * {@link ClosedFormPart} (a {@link GaussianBaseline} or a {@link MixtureBaseline}) when the model has one (the one place where a stored model's network
 * output becomes epsilon-hat and v; the trainer's loss adds the same part through
 * {@link #closedForm()}).
 */
public final class NetworkEstimator implements Estimator {

    final ReverseNetwork network;
    private final ClosedFormPart baseline;
    private final boolean learned;

    /** The network alone (no closed-form part). */
    public NetworkEstimator(ReverseNetwork network) {
        this(network, null, false);
    }

    /**
     * @param network the network
     * @param baseline the closed-form part, or null for none
     * @param learned whether the outputs hold learned variances (v after the Dc epsilon columns)
     */
    public NetworkEstimator(ReverseNetwork network, ClosedFormPart baseline, boolean learned) {
        this.network = network;
        this.baseline = baseline;
        this.learned = learned;
        if (baseline != null) {
            int dc = baseline.continuousColumns();
            int expected = dc * (learned ? 2 : 1);
            if (network.shape().outputs() < expected) {
                throw new IllegalArgumentException("the network has " + network.shape().outputs()
                        + " outputs; the baseline of " + dc + " continuous columns needs at least " + expected);
            }
        }
    }

    /** @return the closed-form part when it is one Gaussian, or null */
    @Override
    public GaussianBaseline baseline() {
        return baseline == null ? null : baseline.linear();
    }

    /** @return the closed-form part, or null */
    @Override
    public ClosedFormPart closedForm() {
        return baseline;
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
        if (baseline == null || baseline.continuousColumns() == 0) {
            return;
        }
        int rows = (int) xt.rows();
        int d = (int) xt.columns();
        int outputs = (int) out.columns();
        float[] x = new float[rows * d];
        INDArray xc = xt.isView() || xt.ordering() != 'c' ? xt.dup('c') : xt;
        xc.data().asNioFloat().get(0, x, 0, x.length);
        float[] o = new float[rows * outputs];
        boolean direct = !out.isView() && out.ordering() == 'c';
        if (direct) {
            out.data().asNioFloat().get(0, o, 0, o.length);
        } else {
            o = out.dup('c').data().asFloat();
        }
        baseline.addInPlace(x, d, steps, o, outputs, rows, learned);
        if (direct) {
            out.data().asNioFloat().put(0, o, 0, o.length);
        } else {
            out.assign(Nd4j.create(o, new long[] {rows, outputs}, 'c'));
        }
    }
}
