package org.backstep.examples;

import org.apache.commons.math3.distribution.MultivariateNormalDistribution;
import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.CholeskyDecomposition;
import org.apache.commons.math3.linear.RealMatrix;
import org.apache.commons.math3.stat.correlation.Covariance;
import org.apache.commons.math3.util.Pair;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Classical anomaly detectors, the comparison for Backstep's screen: each is fitted on the
 * training rows in model space (continuous columns standardized, then binary columns as 0 or 1,
 * then each categorical column as 0/1 indicators of its categories less the first, which the caller,
 * {@code ScreenComparison}, makes from the model-space category indices) and gives every row a score, higher is more unusual. The caller thresholds each at the same
 * quantile of its held-out scores, as Backstep's screen is.
 *
 * <ul>
 *   <li>{@link #mahalanobis}: the squared Mahalanobis distance (x - m)' S^-1 (x - m) from the
 *       training mean m under the training covariance S (all columns); for Gaussian rows it follows
 *       the chi-squared distribution with as many degrees of freedom as columns (Johnson &amp;
 *       Wichern, "Applied Multivariate Statistical Analysis", result 4.7; cited from memory).</li>
 *   <li>{@link #mixture}: the negative log-density under the Gaussian mixture with full covariances
 *       that {@link Baselines} fitted by expectation-maximization (commons-math3) on the same rows'
 *       continuous columns (reused, not fitted again), plus independent Bernoulli terms for the
 *       binary columns (add-one smoothing), the baseline of the held-out bound used as a detector.</li>
 *   <li>{@link #nearest}: the Euclidean distance to the k-th nearest training row (k = 5), the
 *       row itself left out when it is a training row (Ramaswamy, Rastogi &amp; Shim 2000,
 *       "Efficient algorithms for mining outliers from large data sets").</li>
 *   <li>{@link #range}: a range check of each column on its own: a row's score is the largest, over
 *       the continuous columns, of how far out in its column's training values the cell lies
 *       (-log of twice the smaller tail share, plus the distance past the training extreme). A
 *       threshold on it flags a row when some column leaves a central range of its training values;
 *       it cannot see a relation between columns.</li>
 * </ul>
 * Common practice for the detectors' use; Mahalanobis's distribution is checked in DetectorsTest.
 */
final class Detectors {

    /** The neighbour whose distance scores a row (the 5th nearest). */
    static final int NEIGHBOURS = 5;
    /**
     * Added to the covariance's diagonal, in model-space units (variance 1 per continuous column),
     * so that a binary column constant in the training rows leaves it invertible; a millionth of a
     * standardized column's variance moves no distance of an ordinary row.
     */
    static final double RIDGE = 1e-6;

    private Detectors() {
    }

    /** A detector's scores: of the held-out rows (to set its threshold) and of the screened rows. */
    record Scores(String name, double[] heldOut, double[] screened) {
    }

    /**
     * @param train training rows, model space, complete
     * @param held held-out rows
     * @param screened rows to screen
     * @return squared Mahalanobis distances
     */
    static Scores mahalanobis(double[][] train, double[][] held, double[][] screened) {
        Gaussian g = Gaussian.fit(train);
        return new Scores("Mahalanobis distance", map(held, g::distance2), map(screened, g::distance2));
    }

    /**
     * @param train training rows, model space, complete; the first {@code dc} columns continuous
     * @param held held-out rows
     * @param screened rows to screen
     * @param dc the number of continuous columns
     * @param base the baselines fitted on the same training rows: their mixture of the continuous
     *     columns is used as fitted, or, with one component, a Gaussian fitted here
     * @return negative log-densities, nats
     */
    static Scores mixture(double[][] train, double[][] held, double[][] screened, int dc, Baselines.Result base) {
        int components = base.components();
        double[] p = new double[train[0].length];
        for (int j = dc; j < p.length; j++) {
            double ones = 1;
            for (double[] r : train) {
                ones += r[j];
            }
            p[j] = ones / (train.length + 2);
        }
        List<Gaussian> parts = new ArrayList<>();
        List<Double> logWeights = new ArrayList<>();
        if (dc > 0) {
            double[][] ct = columns(train, dc);
            if (components <= 1) {
                parts.add(Gaussian.fit(ct));
                logWeights.add(0.0);
            } else {
                for (Pair<Double, MultivariateNormalDistribution> c : base.mixtureFitted().getComponents()) {
                    parts.add(new Gaussian(c.getSecond().getMeans(), c.getSecond().getCovariances().getData()));
                    logWeights.add(Math.log(c.getFirst()));
                }
            }
        }
        java.util.function.ToDoubleFunction<double[]> nll = x -> {
            double s = 0;
            if (dc > 0) {
                double[] xc = Arrays.copyOf(x, dc);
                double max = Double.NEGATIVE_INFINITY;
                double[] terms = new double[parts.size()];
                for (int k = 0; k < terms.length; k++) {
                    terms[k] = logWeights.get(k) + parts.get(k).logDensity(xc);
                    max = Math.max(max, terms[k]);
                }
                double sum = 0;
                for (double t : terms) {
                    sum += Math.exp(t - max);
                }
                s -= max + Math.log(sum);          // log-sum-exp: no underflow far out
            }
            for (int j = dc; j < x.length; j++) {
                s -= x[j] > 0.5 ? Math.log(p[j]) : Math.log(1 - p[j]);
            }
            return s;
        };
        return new Scores("Gaussian mixture, " + Math.max(1, components) + " components", map(held, nll), map(screened, nll));
    }

    /**
     * @param train training rows, model space, complete
     * @param trainIds an identity per training row (the row index in the table)
     * @param held held-out rows (none of them a training row)
     * @param screened rows to screen
     * @param screenedIds an identity per screened row; a training row with the same one is left out
     * @return the distance to the {@link #NEIGHBOURS}-th nearest training row
     */
    static Scores nearest(double[][] train, int[] trainIds, double[][] held, double[][] screened, int[] screenedIds) {
        if (train.length <= NEIGHBOURS) {
            throw new IllegalArgumentException("the nearest-neighbour detector needs more than " + NEIGHBOURS
                    + " training rows; got " + train.length);
        }
        double[] h = new double[held.length];
        for (int i = 0; i < held.length; i++) {
            h[i] = kthDistance(train, trainIds, held[i], Integer.MIN_VALUE);
        }
        double[] s = new double[screened.length];
        for (int i = 0; i < screened.length; i++) {
            s[i] = kthDistance(train, trainIds, screened[i], screenedIds[i]);
        }
        return new Scores("distance to the " + NEIGHBOURS + "th nearest training row", h, s);
    }

    private static double kthDistance(double[][] train, int[] trainIds, double[] x, int self) {
        double[] best = new double[NEIGHBOURS];           // the k smallest squared distances, ascending
        Arrays.fill(best, Double.POSITIVE_INFINITY);
        for (int t = 0; t < train.length; t++) {
            if (trainIds[t] == self) {
                continue;
            }
            double d = 0;
            double[] r = train[t];
            for (int j = 0; j < x.length && d < best[NEIGHBOURS - 1]; j++) {
                double e = r[j] - x[j];
                d += e * e;
            }
            if (d < best[NEIGHBOURS - 1]) {
                int k = NEIGHBOURS - 1;
                while (k > 0 && best[k - 1] > d) {
                    best[k] = best[k - 1];
                    k--;
                }
                best[k] = d;
            }
        }
        return Math.sqrt(best[NEIGHBOURS - 1]);
    }

    /**
     * @param train training rows, model space, complete; the first {@code dc} columns continuous
     * @param held held-out rows
     * @param screened rows to screen
     * @param dc the number of continuous columns (binary cells are always in range)
     * @return per row, the largest over columns of -log(2 min(below + 1, above + 1) / (n + 1)) plus
     *     the distance past the training extreme, where below and above count the training values
     *     below and above the cell
     */
    static Scores range(double[][] train, double[][] held, double[][] screened, int dc) {
        double[][] sorted = new double[dc][];
        for (int j = 0; j < dc; j++) {
            sorted[j] = new double[train.length];
            for (int i = 0; i < train.length; i++) {
                sorted[j][i] = train[i][j];
            }
            Arrays.sort(sorted[j]);
        }
        java.util.function.ToDoubleFunction<double[]> score = x -> {
            double worst = 0;
            for (int j = 0; j < dc; j++) {
                double[] v = sorted[j];
                int n = v.length;
                int below = lowerBound(v, x[j]);
                int above = n - upperBound(v, x[j]);
                double s = -Math.log(2.0 * (Math.min(below, above) + 1) / (n + 1));
                s += Math.max(0, Math.max(v[0] - x[j], x[j] - v[n - 1]));
                worst = Math.max(worst, s);
            }
            return worst;
        };
        return new Scores("range check of each column", map(held, score), map(screened, score));
    }

    /** The number of values below x (sorted ascending). */
    private static int lowerBound(double[] v, double x) {
        int lo = 0;
        int hi = v.length;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (v[mid] < x) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo;
    }

    /** The number of values at or below x (sorted ascending). */
    private static int upperBound(double[] v, double x) {
        int lo = 0;
        int hi = v.length;
        while (lo < hi) {
            int mid = (lo + hi) >>> 1;
            if (v[mid] <= x) {
                lo = mid + 1;
            } else {
                hi = mid;
            }
        }
        return lo;
    }

    private static double[] map(double[][] rows, java.util.function.ToDoubleFunction<double[]> f) {
        double[] out = new double[rows.length];
        for (int i = 0; i < rows.length; i++) {
            out[i] = f.applyAsDouble(rows[i]);
        }
        return out;
    }

    private static double[][] columns(double[][] rows, int dc) {
        double[][] out = new double[rows.length][];
        for (int i = 0; i < rows.length; i++) {
            out[i] = Arrays.copyOf(rows[i], dc);
        }
        return out;
    }

    /** A Gaussian by its mean and the Cholesky factor of its covariance (plus {@link #RIDGE}). */
    static final class Gaussian {
        private final double[] mean;
        private final double[][] lower;
        private final double logDet;

        Gaussian(double[] mean, double[][] covariance) {
            this.mean = mean.clone();
            int p = mean.length;
            double[][] c = new double[p][];
            for (int i = 0; i < p; i++) {
                c[i] = covariance[i].clone();
                c[i][i] += RIDGE;
            }
            RealMatrix l = new CholeskyDecomposition(new Array2DRowRealMatrix(c, false), 1e-12, 1e-14).getL();
            this.lower = l.getData();
            double ld = 0;
            for (int i = 0; i < p; i++) {
                ld += 2 * Math.log(lower[i][i]);
            }
            this.logDet = ld;
        }

        /** The maximum-likelihood mean and the unbiased covariance of the rows (commons-math3). */
        static Gaussian fit(double[][] rows) {
            double[] m = new double[rows[0].length];
            for (double[] r : rows) {
                for (int j = 0; j < m.length; j++) {
                    m[j] += r[j];
                }
            }
            for (int j = 0; j < m.length; j++) {
                m[j] /= rows.length;
            }
            return new Gaussian(m, new Covariance(rows, true).getCovarianceMatrix().getData());
        }

        /** (x - m)' S^-1 (x - m), by forward substitution L y = x - m: the squared length of y. */
        double distance2(double[] x) {
            int p = mean.length;
            double[] y = new double[p];
            double s = 0;
            for (int i = 0; i < p; i++) {
                double v = x[i] - mean[i];
                for (int k = 0; k < i; k++) {
                    v -= lower[i][k] * y[k];
                }
                y[i] = v / lower[i][i];
                s += y[i] * y[i];
            }
            return s;
        }

        /** log N(x; m, S) = -(p log 2 pi + log det S + d^2) / 2. */
        double logDensity(double[] x) {
            return -0.5 * (mean.length * Math.log(2 * Math.PI) + logDet + distance2(x));
        }
    }
}
