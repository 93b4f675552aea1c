package org.backstep;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.util.Collections;
import java.util.List;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.backstep.internal.chain.GaussianBaseline;
import org.backstep.internal.chain.ModelParts;
import org.backstep.internal.chain.NetworkEstimator;
import org.backstep.internal.net.NetworkShape;
import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.Baseline;
import org.backstep.option.FitOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.TrainingLoss;
import org.backstep.report.FlowLikelihood;
import org.backstep.training.Provenance;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.junit.jupiter.api.Test;

/**
 * The probability-flow likelihood of a model with the {@code STANDARD_NORMAL} closed-form part and
 * a trained-network estimator whose output layer is zero: epsilon-hat = sqrt(1 - abar_t) x_t, the
 * exact epsilon of N(0, I) data, whose every marginal q(x_t) is N(0, I). So the flow's density at
 * step 1 is N(0, I)'s, checked against commons-math3's {@link NormalDistribution}. The network's
 * Jacobian trace is zero here; the divergence is the closed-form part's tr(A_t) = Dc sqrt(1 - abar_t)
 * alone (leaving it out moves each figure by several nats).
 */
class BaselineFlowTest {

    /** As {@code FlowLikelihoodTest}'s tolerances (same schedule, the same held-step error). */
    static final double DENSITY_TOLERANCE = 5e-3;
    static final double DENSITY_RELATIVE_TOLERANCE = 2e-3;
    private static final List<String> NAMES = List.of("a", "b", "c");

    @Test
    void theFlowOfTheStandardNormalPartIsTheStandardNormalDensity() {
        NoiseSchedule schedule = NoiseSchedule.linear(100, 1e-3, 0.3);
        List<ColumnKind> kinds = Collections.nCopies(3, ColumnKind.CONTINUOUS);
        // model space = data space: each column's transform is the identity map
        TableTransform transform = TableTransform.of(NAMES, kinds, Collections.nCopies(3, ColumnTransform.standardize(0, 1)));
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).continuousSchedule(schedule).hidden(8)
                .variance(ReverseVariance.FIXED_POSTERIOR).loss(TrainingLoss.SIMPLE)
                .baseline(Baseline.STANDARD_NORMAL).threads(2).options();
        NetworkShape shape = new NetworkShape(3, options.hidden(), 3, options.embeddingSize(), options.stepInput());
        ReverseNetwork net = ReverseNetwork.create(shape, schedule.steps(), 1, true);   // output layer zero
        GaussianBaseline part = GaussianBaseline.standardNormal(3, schedule);
        Provenance provenance = new Provenance(Provenance.currentLibraryVersion(), System.getProperty("java.version"),
                "", "", "", 0.0, 0, 0, 0, 0, 0, 0, "", List.of(), List.of("zero network"));
        DiffusionModel model = DiffusionModel.of(new ModelParts(options, transform, net,
                new NetworkEstimator(net, part, false), provenance));

        Well19937c random = new Well19937c(31);
        double[][] rows = new double[10][3];
        for (int r = 0; r < rows.length; r++) {
            for (int j = 0; j < 3; j++) {
                rows[r][j] = random.nextGaussian();
            }
        }
        rows[0] = new double[] {2.5, -3.0, 0.5};   // in the tail
        FlowLikelihood flow = model.flowLikelihood(Table.of(NAMES, kinds, rows));
        NormalDistribution n01 = new NormalDistribution(0.0, 1.0);   // commons-math3
        double[] nats = flow.nats();
        for (int r = 0; r < rows.length; r++) {
            double expected = 0.0;
            for (double x : rows[r]) {
                expected -= n01.logDensity(x);
            }
            assertEquals(expected, nats[r], DENSITY_TOLERANCE + DENSITY_RELATIVE_TOLERANCE * Math.abs(expected), "row " + r);
        }
    }
}
