package org.backstep.bench.quality;

import java.io.IOException;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.List;
import java.util.Map;
import java.util.Set;

import org.backstep.internal.chain.ClosedFormPart;
import org.backstep.internal.chain.MixtureBaseline;
import org.backstep.internal.mixture.GaussianMixture;
import org.backstep.option.Baseline;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.Whitening;

/**
 * The closed-form part of {@link Baseline#FITTED_MIXTURE} alone (a zero network), measured: on the
 * fixed split of SOURCES.md, the training rows standardized (SOURCES.md's space) and whitened by their
 * shrunk covariance (as coordinates WHITENED does, {@code Whitening.fitShrunk}), the part fitted on
 * them as the trainer fits it (K by BIC, seed 1), and the held-out negative log-density of the fitted
 * mixture itself, -log p_z(W (y - m)) - log |det W|, nats per test record in SOURCES.md's space,
 * beside the part's K = 1 candidate (FITTED_GAUSSIAN's Gaussian). The model trains on 90% of the
 * training rows; this program fits on all of them (the exact figures of a fit differ slightly). It also
 * prints the held-out figure of the best of the seeded EM starts for each K (what BIC chose among)
 * and the seconds the part's fit took (EM for every K and the BIC choice, one thread).
 *
 * <p>Usage: {@code MixturePart --data DIR --labels DIR [--tables iris,...] [--seed 1]}
 */
public final class MixturePart {

    private MixturePart() {
    }

    /**
     * @param args see the class comment
     * @throws IOException if a table cannot be read
     */
    public static void main(String[] args) throws IOException {
        Map<String, String> o = Options.parse(args, Set.of("--data", "--labels", "--tables", "--seed"));
        if (!o.containsKey("--data") || !o.containsKey("--labels")) {
            throw new IllegalArgumentException("--data and --labels are required");
        }
        Path data = Path.of(o.get("--data"));
        Path labels = Path.of(o.get("--labels"));
        List<String> tables = List.of(o.getOrDefault("--tables", "iris,breast_cancer,diabetes_raw_without_SEX").split(","));
        long seed = Long.parseLong(o.getOrDefault("--seed", "1"));
        System.out.println("table                     K   BIC (K = 1..)                                    mixture nats  K=1 nats");
        for (OpenTable t : OpenTable.ALL) {
            if (!tables.contains(t.key())) {
                continue;
            }
            OpenTable.Split split = t.read(data, labels);
            int dc = split.standardized().modelledContinuous().length;
            double[][] train = block(split.standardized().toModelSpace(split.train()), dc);
            double[][] test = block(split.standardized().toModelSpace(split.test()), dc);
            Whitening w = Whitening.fitShrunk(train);
            int n = train.length;
            float[] x0 = new float[n * dc];
            for (int r = 0; r < n; r++) {
                for (int j = 0; j < dc; j++) {
                    x0[r * dc + j] = (float) train[r][j];
                }
            }
            int[] columns = new int[dc];
            Arrays.setAll(columns, j -> j);
            w.whitenInPlace(x0, n, dc, columns);
            NoiseSchedule schedule = NoiseSchedule.linear(100);
            long started = System.nanoTime();
            MixtureBaseline part = (MixtureBaseline) ClosedFormPart.fit(Baseline.FITTED_MIXTURE, x0, n, dc, dc, schedule, seed);
            double seconds = (System.nanoTime() - started) / 1e9;
            GaussianMixture mix = part.mixture();
            double[] bic = part.bic();
            GaussianMixture one = single(x0, n, dc, schedule);
            float[] z = new float[test.length * dc];
            for (int r = 0; r < test.length; r++) {
                for (int j = 0; j < dc; j++) {
                    z[r * dc + j] = (float) test[r][j];
                }
            }
            w.whitenInPlace(z, test.length, dc, columns);
            double sumMix = 0;
            double sumOne = 0;
            double[] row = new double[dc];
            for (int r = 0; r < test.length; r++) {
                for (int j = 0; j < dc; j++) {
                    row[j] = z[r * dc + j];
                }
                sumMix -= mix.logDensity(row) + w.logDeterminant();
                sumOne -= one.logDensity(row) + w.logDeterminant();
            }
            StringBuilder perK = new StringBuilder();
            double[][] xw = new double[n][dc];
            for (int r = 0; r < n; r++) {
                for (int j = 0; j < dc; j++) {
                    xw[r][j] = x0[r * dc + j];
                }
            }
            for (int k = 1; k <= bic.length; k++) {
                GaussianMixture g = org.backstep.internal.mixture.MixtureFit.fit(xw, k, seed);
                double s = 0;
                for (int r = 0; r < test.length; r++) {
                    for (int j = 0; j < dc; j++) {
                        row[j] = z[r * dc + j];
                    }
                    s -= g.logDensity(row) + w.logDeterminant();
                }
                perK.append(String.format(" K=%d %.3f", k, s / test.length));
            }
            StringBuilder b = new StringBuilder();
            for (double v : bic) {
                b.append(String.format(" %.0f", v));
            }
            System.out.printf("%-25s %d  %-48s %8.3f  %8.3f%n", t.key(), mix.components(), b, sumMix / test.length,
                    sumOne / test.length);
            System.out.printf("    held-out nats by K:%s; the part's fit (EM for K = 2..6, BIC) took %.2f s%n", perK, seconds);
        }
    }

    private static double[][] block(double[][] y, int dc) {
        double[][] b = new double[y.length][];
        for (int r = 0; r < y.length; r++) {
            b[r] = Arrays.copyOf(y[r], dc);
        }
        return b;
    }

    /** The K = 1 candidate: FITTED_GAUSSIAN's Gaussian on the same rows. */
    private static GaussianMixture single(float[] x0, int n, int dc, NoiseSchedule schedule) {
        org.backstep.internal.chain.GaussianBaseline g = org.backstep.internal.chain.GaussianBaseline.fit(
                Baseline.FITTED_GAUSSIAN, x0, n, dc, dc, schedule);
        return GaussianMixture.of(new double[] {1.0}, new double[][] {g.mean()}, new double[][][] {g.covariance()},
                new double[] {g.shrinkage()});
    }
}
