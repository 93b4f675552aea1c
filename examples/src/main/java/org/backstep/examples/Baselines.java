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
 * Bernoulli variables with add-one smoothing in both baselines, and categorical columns as
 * independent categorical variables over their K labels with add-one smoothing (Laplace's rule; a
 * Bernoulli is the case K = 2), so that each figure is a density over the continuous columns times a
 * probability over the binary and categorical ones, as the diffusion bound is. The categorical
 * columns do not enter the Gaussians (no one-hot columns: their covariance would be singular), so
 * the baselines see no relation between a category and the numbers; integer columns enter the
 * Gaussians as the continuous columns they are in model space (a density, where the bound has a
 * probability mass).
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
     * @param mixtureFitted the mixture fitted on all training rows' continuous columns, or null when
     *     one component was picked or there is no continuous column (then the mixture is the one Gaussian)
     */
    public record Result(double oneGaussian, double mixture, int components,
                         MixtureMultivariateNormalDistribution mixtureFitted) {
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
        int[] labels = new int[transform.modelColumns() - dc];
        Arrays.fill(labels, 2);
        int[] cats = transform.modelledCategories();
        System.arraycopy(cats, 0, labels, labels.length - cats.length, cats.length);
        double bern = categoryNll(train, test, dc, labels);
        if (dc == 0) {
            return new Result(bern, bern, 0, null);
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
        MixtureMultivariateNormalDistribution fitted = bestK == 1 ? null : fitMixture(ct, bestK);
        double mix = bestK == 1 ? gauss : mixtureNll(fitted, cs);
        return new Result(gauss + bern, mix + bern, bestK, fitted);
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
        return mixtureNll(fitMixture(train, k), test);
    }

    /** Mean NLL of test rows under a mixture (each density floored at the smallest normal double). */
    static double mixtureNll(MixtureMultivariateNormalDistribution m, double[][] test) {
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

    /**
     * Mean NLL of the test rows' columns from {@code dc} on, each an independent categorical variable
     * with {@code k[j - dc]} categories (cells 0..K-1) and add-one smoothing: p_c = (n_c + 1) / (n + K).
     */
    static double categoryNll(double[][] train, double[][] test, int dc, int[] k) {
        int d = train[0].length;
        double s = 0;
        for (int j = dc; j < d; j++) {
            int kj = k[j - dc];
            double[] count = new double[kj];
            Arrays.fill(count, 1);
            for (double[] r : train) {
                count[(int) Math.round(r[j])]++;
            }
            for (double[] r : test) {
                s -= Math.log(count[(int) Math.round(r[j])] / (train.length + kj));
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
