package org.backstep.examples;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.distribution.fitting.MultivariateNormalMixtureExpectationMaximization;
import org.apache.commons.math3.distribution.MixtureMultivariateNormalDistribution;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.backstep.table.TableTransform;

import java.util.Arrays;

/**
 * Classical baselines for held-out negative log-likelihood in model space, fitted with
 * commons-math3: one full-covariance Gaussian (maximum likelihood), and a Gaussian mixture with full
 * covariances fitted by expectation-maximization (Dempster, Laird &amp; Rubin 1977) whose component
 * count is picked on a validation fold. Binary columns, where present, are modelled as independent
 * Bernoulli variables with add-one smoothing in both baselines, so that each figure is a density
 * over the continuous columns times a probability over the binary ones, as the diffusion bound is.
 */
public final class Baselines {

    /** Component counts tried for the mixture. */
    static final int[] COMPONENTS = {1, 2, 4, 8};
    /** Share of training rows held back to pick the component count. */
    static final double VALIDATION_SHARE = 0.2;

    private Baselines() {
    }

    /**
     * Held-out figures of both baselines.
     *
     * @param oneGaussian mean NLL of the one-Gaussian baseline, nats per record
     * @param mixture mean NLL of the mixture, nats per record
     * @param components the mixture's component count
     */
    public record Result(double oneGaussian, double mixture, int components) {
    }

    /**
     * @param transform the model-space transform (continuous columns first, then binary)
     * @param train training rows in model space, complete
     * @param test held-out rows in model space, complete
     * @param seed unused by EM's deterministic start, kept for the record
     * @return both baselines' held-out NLL
     */
    public static Result fit(TableTransform transform, double[][] train, double[][] test, long seed) {
        int dc = transform.modelledContinuous().length;
        double bern = bernoulliNll(train, test, dc);
        if (dc == 0) {
            return new Result(bern, bern, 0);
        }
        double[][] ct = continuous(train, dc);
        double[][] cs = continuous(test, dc);
        double gauss = gaussianNll(ct, cs);
        int split = (int) Math.round(ct.length * (1 - VALIDATION_SHARE));
        double[][] fitPart = Arrays.copyOfRange(ct, 0, split);
        double[][] valPart = Arrays.copyOfRange(ct, split, ct.length);
        int bestK = 1;
        double bestVal = gaussianNll(fitPart, valPart);
        for (int k : COMPONENTS) {
            if (k == 1) {
                continue;
            }
            try {
                double v = mixtureNll(fitPart, valPart, k);
                if (v < bestVal) {
                    bestVal = v;
                    bestK = k;
                }
            } catch (RuntimeException e) {
                // a singular or degenerate fit at this k: not a candidate
            }
        }
        double mix = bestK == 1 ? gauss : mixtureNll(ct, cs, bestK);
        return new Result(gauss + bern, mix + bern, bestK);
    }

    /** Mean NLL of test rows under the maximum-likelihood Gaussian of the training rows. */
    static double gaussianNll(double[][] train, double[][] test) {
        int n = train.length;
        double[] mean = new double[train[0].length];
        for (double[] r : train) {
            for (int j = 0; j < mean.length; j++) {
                mean[j] += r[j] / n;
            }
        }
        double[][] cov = new Covariance(train, false).getCovarianceMatrix().getData();
        MultivariateNormalDistribution g = new MultivariateNormalDistribution(mean, cov);
        double s = 0;
        for (double[] r : test) {
            s -= Math.log(g.density(r));
        }
        return s / test.length;
    }

    static double mixtureNll(double[][] train, double[][] test, int k) {
        MixtureMultivariateNormalDistribution m = fitMixture(train, k);
        double s = 0;
        for (double[] r : test) {
            s -= Math.log(Math.max(m.density(r), Double.MIN_NORMAL));
        }
        return s / test.length;
    }

    /**
     * The mixture of k full-covariance Gaussians fitted by EM (commons-math3; at most 500
     * iterations, log-likelihood tolerance 1e-6), started from its deterministic estimate.
     */
    static MixtureMultivariateNormalDistribution fitMixture(double[][] train, int k) {
        MultivariateNormalMixtureExpectationMaximization em = new MultivariateNormalMixtureExpectationMaximization(train);
        em.fit(MultivariateNormalMixtureExpectationMaximization.estimate(train, k), 500, 1e-6);
        return em.getFittedModel();
    }

    static double bernoulliNll(double[][] train, double[][] test, int dc) {
        int d = train[0].length;
        double s = 0;
        for (int j = dc; j < d; j++) {
            double ones = 1;
            for (double[] r : train) {
                ones += r[j];
            }
            double p = ones / (train.length + 2);
            for (double[] r : test) {
                s -= r[j] > 0.5 ? Math.log(p) : Math.log(1 - p);
            }
        }
        return s / test.length;
    }

    private static double[][] continuous(double[][] rows, int dc) {
        double[][] out = new double[rows.length][];
        for (int i = 0; i < rows.length; i++) {
            out[i] = Arrays.copyOf(rows[i], dc);
        }
        return out;
    }
}
