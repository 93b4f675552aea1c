package org.backstep.report;

import org.backstep.schedule.Require;

import org.apache.commons.math3.distribution.BetaDistribution;
import org.backstep.option.ThresholdRule;
import org.backstep.table.Table;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.stream.IntStream;

/**
 * A screen and its evidence: the held-out records' scores, the threshold set from them, every
 * screened record's score, the flagged rows, notes on cells that could not be scored or were
 * imputed, and the per-column surprisal of the flagged records. The threshold can be moved
 * afterwards ({@link #at(double)}) and the ROC curve drawn ({@link #roc(int[])}) from what is kept.
 *
 * <p><b>The score</b> of a record is its negative variational bound in nats, model space (Ho et
 * al. 2020, eq. 5; {@code org.backstep.option.BoundOptions}), an upper bound on -log p(x) under the
 * model that is estimated with noise: each term draws x_t ~ q(x_t | x_0), and a sampled bound also
 * draws its steps. The default screen's steady bound draws enough per term that a record's score
 * moves by about 0.04 nats from seed to seed ({@code org.backstep.Defaults#steadyBound()}). A screen
 * uses common random numbers: every record, held-out or screened, is
 * diffused with the same noise at each step (and a sampled bound draws the same steps for every
 * record), so a record's score is a fixed function of the record and the seed; two records'
 * scores differ by what tells them apart, not by their draws, and a record scores the same in
 * whichever table or row it stands. A cell beyond the model space's range, or outside its
 * column's support, makes the record's score +infinity (see {@link CellNote}); such a record is
 * flagged whatever the threshold.
 *
 * <p><b>False positives.</b> With n held-out scores, m of them above the threshold,
 * {@link #falsePositiveInterval(double)} is the Clopper-Pearson interval for the rate at which
 * normal records are flagged (Clopper &amp; Pearson 1934; exact beta quantiles by commons-math3):
 * [B(a/2; m, n - m + 1), B(1 - a/2; m + 1, n - m)], the lower limit 0 when m = 0 and the upper
 * 1 when m = n. For a threshold set from the same held-out scores the interval is conservative
 * below; its upper limit is the exact one (see {@link ThresholdRule#falsePositiveRate(double)}).
 *
 * <p>Caution: the score ranks records by how unusual they are under the model. It is not a
 * calibrated probability of a fault, and a flag is a prompt for a look, not a finding. For
 * safety-, health- or compliance-critical decisions, defer to local regulations and qualified
 * review.
 *
 * @param rule how the threshold was set
 * @param threshold the score (nats per record, model space) above which a record is flagged
 * @param heldOutScores the score of every held-out record, in row order
 * @param scores the score of every screened record, in row order (+infinity for an unscorable one)
 * @param flagged the row indices whose score exceeds the threshold, in row order
 * @param notes the cells of the screened records that were beyond range, outside the support, or
 *     imputed, in row order
 * @param surprisal per-column figures of flagged records (of all of them, or none)
 */
public record AnomalyScreen(ThresholdRule rule, double threshold, double[] heldOutScores, double[] scores,
                            int[] flagged, List<CellNote> notes, Surprisal surprisal) {

    /** Validates and copies the arrays. */
    public AnomalyScreen {
        Require.notNull("scores", scores);
        Require.notNull("flagged", flagged);
        scores = scores.clone();
        flagged = flagged.clone();
        Require.notNull("rule", rule);
        Require.finite("threshold", threshold);
        heldOutScores = Require.notNull("heldOutScores", heldOutScores).clone();
        scores = Require.notNull("scores", scores).clone();
        flagged = Require.notNull("flagged", flagged).clone();
        notes = List.copyOf(Require.notNull("notes", notes));
        Require.notNull("surprisal", surprisal);
        for (double s : heldOutScores) {
            if (!Double.isFinite(s)) {
                throw new IllegalArgumentException("a held-out score is " + s + "; expected finite scores");
            }
        }
        for (double s : scores) {
            if (Double.isNaN(s)) {
                throw new IllegalArgumentException("a score is NaN; expected a number or +infinity");
            }
        }
    }

    /** @return a copy of the held-out scores */
    @Override
    public double[] heldOutScores() {
        return heldOutScores.clone();
    }

    /** @return a copy of the scores */
    @Override
    public double[] scores() {
        return scores.clone();
    }

    /** @return a copy of the flagged rows */
    @Override
    public int[] flagged() {
        return flagged.clone();
    }

    /**
     * @param records the screened table
     * @return the flagged rows of that table
     */
    public Table flaggedRows(Table records) {
        Require.notNull("records", records);
        return records.selectRows(flagged);
    }

    /** @return the flagged rows as a list */
    public List<Integer> flaggedList() {
        return Arrays.stream(flagged).boxed().toList();
    }

    /**
     * @param row a screened row
     * @return the notes on that row's cells
     */
    public List<CellNote> notesFor(int row) {
        return notes.stream().filter(n -> n.row() == row).toList();
    }

    /**
     * @param at a score
     * @return the number of held-out scores above it
     */
    public int heldOutExceedances(double at) {
        return (int) Arrays.stream(heldOutScores).filter(s -> s > at).count();
    }

    /** @return m/n: the share of held-out scores above the threshold, an estimate of the false-positive rate */
    public double falsePositiveRate() {
        return heldOutScores.length == 0 ? 0.0 : heldOutExceedances(threshold) / (double) heldOutScores.length;
    }

    /**
     * The Clopper-Pearson interval for the rate at which normal records are flagged, from the m of n
     * held-out scores above the threshold (see {@link AnomalyScreen}).
     *
     * @param level the confidence level, in (0, 1), e.g. 0.95
     * @return {lower, upper}
     */
    public double[] falsePositiveInterval(double level) {
        Require.inOpen("level", level, 0.0, 1.0);
        return clopperPearson(heldOutScores.length, heldOutExceedances(threshold), level);
    }

    /**
     * The Clopper-Pearson interval (Clopper &amp; Pearson 1934) for a binomial proportion from m
     * successes in n trials: [B(a/2; m, n - m + 1), B(1 - a/2; m + 1, n - m)] with a = 1 - level and
     * B(p; alpha, beta) the beta quantile (commons-math3), 0 below when m = 0, 1 above when m = n.
     *
     * @param n trials, at least 1
     * @param m successes, 0..n
     * @param level in (0, 1)
     * @return {lower, upper}
     */
    public static double[] clopperPearson(int n, int m, double level) {
        Require.atLeast("n", n, 1);
        Require.inRange("m", m, 0, n);
        Require.inOpen("level", level, 0.0, 1.0);
        double a = 1.0 - level;
        double lo = m == 0 ? 0.0 : new BetaDistribution(null, m, n - m + 1.0).inverseCumulativeProbability(a / 2);
        double hi = m == n ? 1.0 : new BetaDistribution(null, m + 1.0, n - m).inverseCumulativeProbability(1 - a / 2);
        return new double[] {lo, hi};
    }

    /**
     * The same screen with the threshold moved: flags recomputed from the kept scores; surprisal
     * figures kept for the rows still flagged (rows newly flagged have none: ask the model for
     * them).
     *
     * @param newThreshold a finite score
     * @return the moved screen, its rule {@link ThresholdRule#score(double)}
     */
    public AnomalyScreen at(double newThreshold) {
        Require.finite("threshold", newThreshold);
        int[] f = flaggedAt(scores, newThreshold);
        return new AnomalyScreen(ThresholdRule.score(newThreshold), newThreshold, heldOutScores, scores, f, notes,
                surprisal.restrictedTo(f));
    }

    /**
     * The receiver operating characteristic of the screened records against known faults: one point
     * per distinct score, from +infinity (nothing flagged) down to below the lowest score
     * (everything flagged), each the share of normal and of faulty records whose score is above it.
     *
     * @param faultRows the rows of the screened table known to be faulty (others are normal)
     * @return the points, false-positive rate rising
     * @throws IllegalArgumentException if a row is out of range, or either class is empty
     */
    public List<RocPoint> roc(int[] faultRows) {
        boolean[] fault = labels(faultRows);
        int faults = 0;
        for (boolean b : fault) {
            faults += b ? 1 : 0;
        }
        int normals = scores.length - faults;
        Integer[] order = IntStream.range(0, scores.length).boxed().toArray(Integer[]::new);
        Arrays.sort(order, (p, q) -> Double.compare(scores[q], scores[p]));
        List<RocPoint> out = new ArrayList<>();
        out.add(new RocPoint(Double.POSITIVE_INFINITY, 0.0, 0.0));
        int tp = 0;
        int fp = 0;
        int i = 0;
        while (i < order.length) {
            double s = scores[order[i]];
            while (i < order.length && scores[order[i]] == s) {
                if (fault[order[i]]) {
                    tp++;
                } else {
                    fp++;
                }
                i++;
            }
            double below = i < order.length ? scores[order[i]] : Double.NEGATIVE_INFINITY;
            out.add(new RocPoint(below, fp / (double) normals, tp / (double) faults));
        }
        return out;
    }

    /**
     * The area under {@link #roc(int[])}: the probability that a faulty record scores above a
     * normal one, ties counting half (the Mann-Whitney statistic U over n_fault n_normal; Hanley
     * &amp; McNeil 1982, "The meaning and use of the area under a ROC curve"), by {@link RocArea}.
     *
     * @param faultRows the rows known to be faulty (the others are normal)
     * @return the area, in [0, 1]
     * @throws IllegalArgumentException if a row is out of range, or either class is empty
     */
    public double rocArea(int[] faultRows) {
        boolean[] fault = labels(faultRows);
        boolean[] normal = new boolean[fault.length];
        for (int i = 0; i < fault.length; i++) {
            normal[i] = !fault[i];
        }
        return RocArea.of(scores, fault, normal);
    }

    private boolean[] labels(int[] faultRows) {
        Require.notNull("faultRows", faultRows);
        boolean[] fault = new boolean[scores.length];
        for (int r : faultRows) {
            Require.inRange("faultRows entry", r, 0, scores.length - 1);
            fault[r] = true;
        }
        int faults = 0;
        for (boolean b : fault) {
            faults += b ? 1 : 0;
        }
        if (faults == 0 || faults == scores.length) {
            throw new IllegalArgumentException("faultRows marks " + faults + " of " + scores.length
                    + " rows; a ROC curve needs both faulty and normal rows");
        }
        return fault;
    }

    /**
     * @param scores per-record scores
     * @param threshold a score
     * @return the rows whose score is above it, in row order
     */
    public static int[] flaggedAt(double[] scores, double threshold) {
        Require.notNull("scores", scores);
        return IntStream.range(0, scores.length).filter(i -> scores[i] > threshold).toArray();
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof AnomalyScreen a && rule.equals(a.rule) && Double.compare(threshold, a.threshold) == 0
                && Arrays.equals(heldOutScores, a.heldOutScores) && Arrays.equals(scores, a.scores)
                && Arrays.equals(flagged, a.flagged) && notes.equals(a.notes) && surprisal.equals(a.surprisal);
    }

    @Override
    public int hashCode() {
        return 31 * (31 * (31 * rule.hashCode() + Double.hashCode(threshold)) + Arrays.hashCode(scores))
                + Arrays.hashCode(flagged);
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT, "AnomalyScreen[%s, threshold %.4f nats, %d of %d flagged, %d held-out, "
                        + "%d notes]", rule, threshold, flagged.length, scores.length, heldOutScores.length,
                notes.size());
    }
}
