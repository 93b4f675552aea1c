package org.backstep.bench.quality;

import org.apache.commons.math3.stat.descriptive.rank.Percentile;

/** The figures of the benchmark, each by its textbook definition. */
final class Measures {

    private Measures() {
    }

    /**
     * The area under the ROC curve of scores where higher means more anomalous: the probability that
     * an anomalous record scores above a normal one, ties counting one half (the Mann-Whitney U
     * statistic over n_normal n_anomalous; Hanley &amp; McNeil 1982, "The meaning and use of the area
     * under a receiver operating characteristic (ROC) curve", Radiology 143:29-36).
     *
     * @param normal scores of normal records (not modified)
     * @param anomalous scores of anomalous records (not modified)
     * @return the AUROC in [0, 1]
     */
    static double auroc(double[] normal, double[] anomalous) {
        double wins = 0;
        for (double a : anomalous) {
            for (double n : normal) {
                wins += a > n ? 1.0 : a == n ? 0.5 : 0.0;
            }
        }
        return wins / ((double) normal.length * anomalous.length);
    }

    /**
     * The share of anomalous records scoring above the q-quantile of the normal ones (type 7, linear
     * interpolation; Hyndman &amp; Fan 1996, as numpy's default quantile).
     *
     * @param normal normal scores (not modified)
     * @param anomalous anomalous scores (not modified)
     * @param q the quantile, e.g. 0.99
     * @return the recall
     */
    static double recallAt(double[] normal, double[] anomalous, double q) {
        double threshold = quantile(normal, q);
        int above = 0;
        for (double a : anomalous) {
            if (a > threshold) {
                above++;
            }
        }
        return above / (double) anomalous.length;
    }

    /**
     * @param values the sample (not modified)
     * @param q in (0, 1]
     * @return the type-7 quantile (commons-math3's Percentile, estimation type R_7)
     */
    static double quantile(double[] values, double q) {
        return new Percentile().withEstimationType(Percentile.EstimationType.R_7).evaluate(values, 100.0 * q);
    }

    /** @return the mean */
    static double mean(double[] v) {
        double s = 0;
        for (double x : v) {
            s += x;
        }
        return s / v.length;
    }

    /** @return the sample standard deviation (n - 1); NaN for fewer than two values */
    static double sd(double[] v) {
        if (v.length < 2) {
            return Double.NaN;
        }
        double m = mean(v);
        double s = 0;
        for (double x : v) {
            s += (x - m) * (x - m);
        }
        return Math.sqrt(s / (v.length - 1));
    }
}
