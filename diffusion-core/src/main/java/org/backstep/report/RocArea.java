package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.Arrays;

/**
 * The area under a receiver operating characteristic curve (AUROC), computed from ranks: the
 * probability that a record of the positive class (say, faulty) scores above a record of the
 * negative class (normal), ties counting half. It equals the Mann-Whitney statistic over the number
 * of pairs, A = U / (n_pos n_neg) (Hanley &amp; McNeil 1982, "The meaning and use of the area under a
 * receiver operating characteristic (ROC) curve", Radiology 143, section "Relation to the Wilcoxon
 * statistic"), with U = R_pos - n_pos (n_pos + 1) / 2 and R_pos the sum of the positive records'
 * ranks among both classes, tied scores sharing the mean of their ranks (Mann &amp; Whitney 1947).
 * Sorting makes it O(n log n); the numerator is a sum of half-integers, exact in double for any
 * table the library holds, so the area is U / (n_pos n_neg) rounded once.
 *
 * <p>{@link AnomalyScreen#rocArea(int[])} is this area for a screen's records against known faults.
 */
public final class RocArea {

    private RocArea() {
    }

    /**
     * @param scores every record's score, higher meaning more unusual; +infinity allowed (not modified)
     * @param positive per record, whether it belongs to the class expected to score high (not modified)
     * @param negative per record, whether it belongs to the class expected to score low; a record in
     *     neither class is left out (not modified)
     * @return the area, in [0, 1]: 1 when every positive record scores above every negative one, 0.5
     *     when the scores do not tell the classes apart
     * @throws IllegalArgumentException if the lengths differ, a score is NaN, a record is in both
     *     classes, or a class is empty
     */
    public static double of(double[] scores, boolean[] positive, boolean[] negative) {
        Require.notNull("scores", scores);
        Require.notNull("positive", positive);
        Require.notNull("negative", negative);
        if (positive.length != scores.length || negative.length != scores.length) {
            throw new IllegalArgumentException("positive has length " + positive.length + " and negative "
                    + negative.length + "; expected " + scores.length + ", the length of scores (one per record)");
        }
        int n = 0;
        for (int i = 0; i < scores.length; i++) {
            if (positive[i] && negative[i]) {
                throw new IllegalArgumentException("record " + i + " is marked both positive and negative; expected"
                        + " one class per record");
            }
            if (positive[i] || negative[i]) {
                if (Double.isNaN(scores[i])) {
                    throw new IllegalArgumentException("the score of record " + i + " is NaN; expected a number or"
                            + " +-infinity");
                }
                n++;
            }
        }
        Integer[] order = new Integer[n];
        int m = 0;
        for (int i = 0; i < scores.length; i++) {
            if (positive[i] || negative[i]) {
                order[m++] = i;
            }
        }
        Arrays.sort(order, (a, b) -> Double.compare(scores[a], scores[b]));
        double rankSum = 0;
        long pos = 0;
        int i = 0;
        while (i < n) {
            int j = i;
            while (j < n && scores[order[j]] == scores[order[i]]) {
                j++;
            }
            double midRank = (i + 1 + j) / 2.0;           // ranks i+1..j share their mean
            for (int k = i; k < j; k++) {
                if (positive[order[k]]) {
                    rankSum += midRank;
                    pos++;
                }
            }
            i = j;
        }
        long neg = n - pos;
        if (pos == 0 || neg == 0) {
            throw new IllegalArgumentException(pos + " positive and " + neg + " negative records; an area needs both");
        }
        return (rankSum - pos * (pos + 1) / 2.0) / ((double) pos * neg);
    }
}
