package org.backstep;

import org.backstep.report.BoundReport;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.commons.math3.stat.descriptive.moment.Mean;
import org.apache.commons.math3.stat.descriptive.moment.StandardDeviation;
import org.backstep.table.ColumnTransform;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;

import java.net.URL;
import java.nio.file.Path;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * A fitted model on an open table (iris, test resources data/) against the classical one-Gaussian
 * baseline listed in data/SOURCES.md, on that file's fixed split.
 */
class OpenDataBoundTest {

    /** data/SOURCES.md, "Classical baselines on that split": iris, one Gaussian, nats per record. */
    private static final double IRIS_ONE_GAUSSIAN = 3.686;
    /** SOURCES.md prints the baseline to 3 decimals; our recomputation must agree to 0.01. */
    private static final double LISTED_FIGURE_TOL = 0.01;
    /** The model's standardization against commons-math3's mean and sd of the same doubles. */
    private static final double IDENTITY_TOL = 1e-12;
    /** SOURCES.md: row i (0-based, file order) is a test row when i % 5 == 0. */
    private static final int TEST_EVERY = 5;

    /**
     * A budget that trains in seconds: 6,000 minibatch steps (2,000 epochs of three batches of 32 of
     * the 120 rows) of a 64 x 2 network at a step size of 1e-2. Measured on this split at the
     * defaults of the time (whitened with the N(0, I) part, weight decay 3e-4 per update): held-out
     * bounds of 3.53, 3.44 and 3.42 nats for seeds 1, 2 and 3 (3.16, 3.17, 3.20 without the decay;
     * diffusion-bench/results/decay.txt), so the check below does not hang on one seed.
     */
    private static Backstep.Builder builder() {
        return Backstep.builder().steps(100).hidden(64, 64).batchSize(32).epochs(2000).learningRate(1e-2)
                .checkpointFraction(0.0).threads(2).seed(1)
                // standardized maps: the test checks the model space against SOURCES.md's standardized one
                .marginals(org.backstep.option.Marginals.STANDARDIZED);
    }

    static Table iris() throws Exception {
        URL url = OpenDataBoundTest.class.getResource("/data/iris.csv");
        assertNotNull(url, "test resource data/iris.csv is missing");
        return CsvTables.reader().read(Path.of(url.toURI()));
    }

    @Test
    void irisHeldOutBoundBeatsOneGaussian() throws Exception {
        Table iris = iris();
        Table train = iris.filterRows(i -> i % TEST_EVERY != 0);
        Table test = iris.filterRows(i -> i % TEST_EVERY == 0);
        // data/SOURCES.md: iris is 150 x 4, so the split gives 120 training and 30 test rows
        assertEquals(120, train.rows());
        assertEquals(30, test.rows());

        // The one-Gaussian baseline recomputed with commons-math3: standardize by the training rows'
        // mean and population sd (SOURCES.md), fit the maximum-likelihood Gaussian (mean, covariance
        // with divisor n) and average -log density over the test rows.
        int d = iris.columns();
        double[] mean = new double[d];
        double[] sd = new double[d];
        for (int j = 0; j < d; j++) {
            mean[j] = new Mean().evaluate(train.column(j));
            sd[j] = new StandardDeviation(false).evaluate(train.column(j));
        }
        double[][] z = standardize(train, mean, sd);
        double[][] zTest = standardize(test, mean, sd);
        double[] mu = new double[d];
        for (int j = 0; j < d; j++) {
            final int col = j;
            mu[j] = new Mean().evaluate(java.util.Arrays.stream(z).mapToDouble(r -> r[col]).toArray());
        }
        MultivariateNormalDistribution gaussian = new MultivariateNormalDistribution(mu,
                new Covariance(z, false).getCovarianceMatrix().getData());
        double gaussianNll = 0.0;
        for (double[] r : zTest) {
            gaussianNll -= Math.log(gaussian.density(r));
        }
        gaussianNll /= zTest.length;
        // data/SOURCES.md, "Classical baselines on that split": 3.686
        assertEquals(IRIS_ONE_GAUSSIAN, gaussianNll, LISTED_FIGURE_TOL, "one-Gaussian baseline");

        DiffusionModel model = builder().fit(train);
        // the model's space is SOURCES.md's standardized space: training mean and population sd,
        // as computed by commons-math3 Mean and StandardDeviation(false)
        for (int j = 0; j < d; j++) {
            ColumnTransform t = model.transform().transform(j);
            assertEquals(ColumnTransform.Kind.STANDARDIZE, t.kind(), iris.name(j));
            assertEquals(mean[j], t.shift(), IDENTITY_TOL * Math.abs(mean[j]), iris.name(j));
            assertEquals(sd[j], t.scale(), IDENTITY_TOL * sd[j], iris.name(j));
        }
        // checkpointFraction 0: every training row was trained on, and no test row was seen
        assertEquals(train.rows(), model.provenance().trainingRows());
        assertEquals(0, model.provenance().checkpointRows());

        BoundReport bound = model.bound(test, 7);
        assertEquals(BoundReport.Method.EXACT, bound.method());
        assertEquals(model.steps(), bound.draws());
        assertEquals(test.rows(), bound.records());
        double nats = bound.meanNats();
        assertTrue(Double.isFinite(nats), "held-out bound is " + nats);
        // target: below the one-Gaussian figure that data/SOURCES.md lists (3.686 nats per record)
        assertTrue(nats < IRIS_ONE_GAUSSIAN, "held-out bound " + nats + " nats per record is not below the one-Gaussian "
                + IRIS_ONE_GAUSSIAN);
    }

    private static double[][] standardize(Table t, double[] mean, double[] sd) {
        double[][] z = t.toArray();
        for (double[] r : z) {
            for (int j = 0; j < r.length; j++) {
                r[j] = (r[j] - mean[j]) / sd[j];
            }
        }
        return z;
    }
}
