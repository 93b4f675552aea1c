package org.backstep.bench.quality;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.option.BoundOptions;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;

/**
 * The Gaussian check of issue 11: 13-dimensional Gaussian data of known density, 1,424 training
 * rows and 356 test rows (ten times a 178-row table split 4:1), fitted by Backstep with each
 * requested {@link Lever}, against the Gaussian fitted on the training rows (mean and population
 * covariance, the maximum-likelihood estimate; density by commons-math3) and the true density.
 * Figures are nats per test record in the data's own units (Backstep: the exact bound, all T
 * terms, mean over the bound seeds, the lever's log-Jacobian taken off; rec sd: the per-record sd
 * over the bound seeds, root mean square over the records).
 *
 * <p>The covariance: S = D C D with C the correlation of A A^T / 13 + 0.3 I, A a 13 x 13 matrix of
 * standard normal draws (Well19937c seed 13), and sd_j = 1 + j / 2, means mu_j = 3 j: strongly and
 * unevenly correlated columns on different scales.
 *
 * <p>Usage: {@code GaussianCheck [--seeds 1,2] [--bound-seeds 3] [--only-levers DEFAULTS,...]
 * [--weight-decay 3e-4]} ({@code --weight-decay}: every fit with this decoupled weight decay per update
 * instead of {@code Defaults.WEIGHT_DECAY}).
 */
public final class GaussianCheck {

    static final int D = 13;
    static final int TRAIN = 1424;
    static final int TEST = 356;

    private GaussianCheck() {
    }

    public static void main(String[] args) {
        List<Long> seeds = List.of(1L, 2L);
        int boundSeeds = 3;
        double weightDecay = org.backstep.Defaults.WEIGHT_DECAY;
        List<Lever> levers = List.of(Lever.DEFAULTS, Lever.STANDARD_NORMAL_PART, Lever.WHITENED_STANDARD_NORMAL_PART,
                Lever.FITTED_GAUSSIAN_PART);
        for (int i = 0; i < args.length; i += 2) {
            switch (args[i]) {
                case "--seeds" -> seeds = Arrays.stream(args[i + 1].split(",")).map(Long::parseLong).toList();
                case "--bound-seeds" -> boundSeeds = Integer.parseInt(args[i + 1]);
                case "--only-levers" -> levers = Arrays.stream(args[i + 1].split(",")).map(Lever::valueOf).toList();
                case "--weight-decay" -> weightDecay = Double.parseDouble(args[i + 1]);
                default -> throw new IllegalArgumentException("unknown option " + args[i]);
            }
        }
        double[] mu = new double[D];
        double[][] sigma = covariance(mu);
        MultivariateNormalDistribution truth = new MultivariateNormalDistribution(new Well19937c(1780), mu, sigma);
        double[][] train = new double[TRAIN][];
        double[][] test = new double[TEST][];
        for (int i = 0; i < TRAIN; i++) {
            train[i] = truth.sample();
        }
        for (int i = 0; i < TEST; i++) {
            test[i] = truth.sample();
        }
        double[] mean = new double[D];
        for (double[] r : train) {
            for (int j = 0; j < D; j++) {
                mean[j] += r[j] / TRAIN;
            }
        }
        double[][] mle = new Covariance(train, false).getCovarianceMatrix().getData();
        MultivariateNormalDistribution fitted = new MultivariateNormalDistribution(mean, mle);
        double fittedNll = 0;
        double trueNll = 0;
        for (double[] r : test) {
            fittedNll -= Math.log(fitted.density(r)) / TEST;
            trueNll -= Math.log(truth.density(r)) / TEST;
        }
        List<String> names = new ArrayList<>();
        List<ColumnKind> kinds = new ArrayList<>();
        for (int j = 0; j < D; j++) {
            names.add("x" + (j + 1));
            kinds.add(ColumnKind.CONTINUOUS);
        }
        Table trainT = Table.of(names, kinds, train);
        Table testT = Table.of(names, kinds, test);
        StringBuilder out = new StringBuilder();
        out.append(String.format(Locale.ROOT, "13-dimensional Gaussian, %d training and %d test rows; nats per test record, "
                + "data units; weight decay %s per update%n  true density %.3f; fitted Gaussian (MLE) %.3f%n", TRAIN, TEST,
                weightDecay, trueNll, fittedNll));
        for (Lever lever : levers) {
            List<Double> perSeed = new ArrayList<>();
            List<Double> recordSd = new ArrayList<>();
            double seconds = 0;
            for (long seed : seeds) {
                Lever.Encoding enc = lever.fit(trainT);
                long t0 = System.nanoTime();
                DiffusionModel m = lever.builder(seed).weightDecay(weightDecay).fit(enc.encode(trainT));
                seconds += (System.nanoTime() - t0) / 1e9;
                double[] lj = enc.logJacobian(testT);
                Table encTest = enc.encode(testT);
                double sum = 0;
                double[][] per = new double[boundSeeds][];
                for (int b = 1; b <= boundSeeds; b++) {
                    double[] n = m.bound(encTest, BoundOptions.exact(), b).natsOriginalUnits();
                    per[b - 1] = n;
                    for (int i = 0; i < n.length; i++) {
                        sum += (n[i] - lj[i]) / n.length;
                    }
                }
                double squares = 0;
                for (int i = 0; i < TEST; i++) {
                    double[] across = new double[boundSeeds];
                    for (int b = 0; b < boundSeeds; b++) {
                        across[b] = per[b][i];
                    }
                    double sd = Measures.sd(across);
                    squares += sd * sd;
                }
                recordSd.add(Math.sqrt(squares / TEST));
                perSeed.add(sum / boundSeeds);
                System.err.printf(Locale.ROOT, "gaussian13, %s, seed %d: %.5f (rec sd %.3f)%n", lever, seed,
                        sum / boundSeeds, Math.sqrt(squares / TEST));
            }
            double avg = perSeed.stream().mapToDouble(Double::doubleValue).average().orElse(Double.NaN);
            out.append(String.format(Locale.ROOT, "  %-28s %.3f (%s; %+.3f vs fitted Gaussian), rec sd %.3f, fit %.1f s per fit%n",
                    lever, avg, perSeed.stream().map(v -> String.format(Locale.ROOT, "%.3f", v)).toList(),
                    avg - fittedNll, recordSd.stream().mapToDouble(Double::doubleValue).average().orElse(Double.NaN),
                    seconds / seeds.size()));
        }
        System.out.print(out);
    }

    static double[][] covariance(double[] mu) {
        Well19937c rng = new Well19937c(13);
        double[][] a = new double[D][D];
        for (double[] row : a) {
            for (int j = 0; j < D; j++) {
                row[j] = rng.nextGaussian();
            }
        }
        double[][] s = new double[D][D];
        for (int i = 0; i < D; i++) {
            for (int j = 0; j < D; j++) {
                double v = 0;
                for (int k = 0; k < D; k++) {
                    v += a[i][k] * a[j][k];
                }
                s[i][j] = v / D + (i == j ? 0.3 : 0.0);
            }
        }
        double[][] out = new double[D][D];
        for (int i = 0; i < D; i++) {
            mu[i] = 3.0 * i;
            for (int j = 0; j < D; j++) {
                double c = s[i][j] / Math.sqrt(s[i][i] * s[j][j]);
                out[i][j] = c * (1 + i / 2.0) * (1 + j / 2.0);
            }
        }
        return out;
    }
}
