package org.backstep;

import java.nio.FloatBuffer;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.backstep.internal.chain.Estimator;
import org.backstep.option.FitOptions;
import org.backstep.option.StepInput;
import org.backstep.posterior.CategoricalDiffusion;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.TableTransform;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * The exact estimator of one categorical column with known category probabilities pi (no
 * training): from x_t one-hot, the logits of q(x_0 = c | x_t), log pi_c + log q(x_t | x_0 = c)
 * (Bayes' rule; the marginal of Hoogeboom et al. 2021, section 4). With it the reverse kernel
 * sum_c q(x_0 = c | x_t) q(x_{t-1} | x_t, x_0 = c) is the exact q(x_{t-1} | x_t).
 */
final class CategoricalOracle implements Estimator {

    private final double[] logPi;
    private final CategoricalDiffusion diffusion;
    private final int k;

    CategoricalOracle(NoiseSchedule binary, double[] pi) {
        this.k = pi.length;
        this.logPi = new double[k];
        for (int c = 0; c < k; c++) {
            logPi[c] = Math.log(pi[c]);
        }
        this.diffusion = CategoricalDiffusion.of(binary, k);
    }

    @Override
    public int inputs() {
        return k;
    }

    @Override
    public int outputs() {
        return k;
    }

    @Override
    public void predict(INDArray xt, int[] steps, INDArray out) {
        int rows = (int) xt.rows();
        float[] x = new float[rows * k];
        INDArray in = xt.ordering() == 'c' && !xt.isView() ? xt : xt.dup('c');
        in.data().asNioFloat().get(0, x, 0, x.length);
        float[] o = new float[rows * k];
        for (int r = 0; r < rows; r++) {
            int cat = 0;
            for (int c = 0; c < k; c++) {
                if (x[r * k + c] > 0.5f) {
                    cat = c;
                }
            }
            for (int c = 0; c < k; c++) {
                o[r * k + c] = (float) (logPi[c] + diffusion.logMarginal(steps[r], c, cat));
            }
        }
        FloatBuffer view = out.data().asNioFloat();
        view.put(0, o, 0, o.length);
    }

    /** A model of one categorical column "c" with labels "k0".."k(K-1)" over this oracle. */
    static DiffusionModel model(int steps, double[] pi) {
        NoiseSchedule bin = NoiseSchedule.binomial(steps);
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(NoiseSchedule.linear(steps)).binarySchedule(bin)
                .timeEmbedding(2, StepInput.INPUT).hidden(1).logColumns().threads(2).options();
        List<String> labels = new ArrayList<>();
        for (int c = 0; c < pi.length; c++) {
            labels.add("k" + c);
        }
        TableTransform transform = TableTransform.of(List.of("c"), List.of(ColumnKind.CATEGORICAL),
                Map.of("c", labels), List.of(ColumnTransform.identity()));
        return DiffusionModel.withEstimator(options, transform, new CategoricalOracle(bin, pi));
    }
}
