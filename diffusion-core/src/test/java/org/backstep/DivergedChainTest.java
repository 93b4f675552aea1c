package org.backstep;

import org.backstep.internal.chain.Estimator;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplingPlan;
import org.backstep.option.TrainingLoss;

import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

import java.util.List;

import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * A reverse chain that leaves the float range is reported, never returned as NaN cells (the
 * project's rule: no silent NaN). The estimator is a supplied one that is far off on purpose, so
 * the failure does not depend on training.
 */
class DivergedChainTest {

    /** An epsilon-hat near the float maximum: the first step, which divides by sqrt(alpha_T) &lt; 1, leaves the float range. */
    private static final float WILD_EPSILON = 1e38f;

    private static DiffusionModel wildModel() {
        NoiseSchedule schedule = NoiseSchedule.linear(20);
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).continuousSchedule(schedule).variance(ReverseVariance.FIXED_POSTERIOR)
                .loss(TrainingLoss.SIMPLE).threads(1).options();
        TableTransform transform = TableTransform.of(List.of("a"), List.of(ColumnKind.CONTINUOUS),
                List.of(ColumnTransform.standardize(0.0, 1.0)));
        Estimator wild = new ConstantEstimator(1, 1, WILD_EPSILON);
        return DiffusionModel.withEstimator(options, transform, wild);
    }

    @Test
    void divergedSamplingIsReportedNotReturnedAsNaN() {
        DiffusionModel model = wildModel();
        // common practice, no source: a diverged run must fail loudly, naming what happened
        IllegalStateException e = assertThrows(IllegalStateException.class, () -> model.sample(4, 1));
        assertTrue(e.getMessage().contains("diverged"), e.getMessage());
        assertTrue(e.getMessage().contains("step"), e.getMessage());
        IllegalStateException implicit = assertThrows(IllegalStateException.class,
                () -> model.sample(4, SamplingPlan.implicit(10, 0.0), 1));
        assertTrue(implicit.getMessage().contains("diverged"), implicit.getMessage());
        Table holes = Table.of(List.of("a"), List.of(ColumnKind.CONTINUOUS), new double[][] {{Double.NaN}, {0.5}});
        assertThrows(IllegalStateException.class, () -> model.impute(holes, Defaults.imputation().withDraws(2).withLevel(0.9), 1));
    }
}
