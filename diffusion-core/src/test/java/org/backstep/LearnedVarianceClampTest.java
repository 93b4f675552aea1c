package org.backstep;

import org.backstep.internal.chain.Chain;
import org.backstep.internal.chain.Estimator;
import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.List;

import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;
import org.nd4j.linalg.api.ndarray.INDArray;

/**
 * The bound scores the same clamped learned variance that sampling draws with: a network output v
 * far past the clamp gives the same kernel, and so the same bound, as any other v past it.
 */
class LearnedVarianceClampTest {

    /** Bounds computed along the same path from the same seed: identical up to float rounding of v. */
    private static final double SAME_BOUND = 1e-9;

    private static DiffusionModel modelWithV(float v) {
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(NoiseSchedule.linear(20))
                .variance(ReverseVariance.LEARNED).threads(1).options();
        TableTransform transform = TableTransform.of(List.of("a"), List.of(ColumnKind.CONTINUOUS),
                List.of(ColumnTransform.standardize(0.0, 1.0)));
        Estimator fixed = new Estimator() {
            @Override
            public int inputs() {
                return 1;
            }

            @Override
            public int outputs() {
                return 2;   // epsilon-hat, then v
            }

            @Override
            public void predict(INDArray xt, int[] steps, INDArray out) {
                for (int r = 0; r < out.rows(); r++) {
                    out.putScalar(r, 0, 0f);
                    out.putScalar(r, 1, v);
                }
            }
        };
        return DiffusionModel.withEstimator(options, transform, fixed);
    }

    @Test
    void boundUsesTheClampedLearnedVariance() {
        Table records = Table.of(List.of("a"), List.of(ColumnKind.CONTINUOUS), new double[][] {{0.3}, {-1.2}, {2.0}});
        double[] far = modelWithV(1e12f).bound(records, 7).nats();
        double[] farther = modelWithV(2e12f).bound(records, 7).nats();
        double[] inside = modelWithV(0.5f).bound(records, 7).nats();
        // v = 1e12 and 2e12 put v log beta + (1 - v) log beta-tilde past the clamp
        // (Chain.LOG_VARIANCE_MARGIN) at every step, even where the two logs differ by 1e-10 (v = 1e6
        // did not): the same kernel, the same bound. Before the bound clamped, these differed 2x.
        // (common practice, no source: a clamped value no longer depends on its input)
        assertArrayEquals(far, farther, SAME_BOUND);
        // and the clamp is what made them equal: inside it, v matters
        assertTrue(Math.abs(far[0] - inside[0]) > 1.0, "v inside the clamp should change the bound");
    }
}
