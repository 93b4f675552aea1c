package org.backstep.option;

import org.backstep.schedule.Require;

/**
 * Where a screen puts its threshold on the per-record score (nats, model space); a record is
 * flagged when its score is above the threshold.
 * <ul>
 *   <li>{@link #quantile(double)}: the q-quantile of the held-out scores, the empirical quantile
 *       with linear interpolation between order statistics (Hyndman &amp; Fan 1996, type 7).</li>
 *   <li>{@link #falsePositiveRate(double)}: for an expected false-positive rate a, the k-th
 *       smallest of the n held-out scores with k = ceil((n + 1)(1 - a)). If held-out and screened
 *       normal records are exchangeable and their scores have no ties, a normal record is flagged
 *       with probability (n + 1 - k)/(n + 1) &lt;= a (the rank argument of conformal prediction:
 *       Vovk, Gammerman &amp; Shafer 2005, "Algorithmic Learning in a Random World", section 2.1;
 *       Angelopoulos &amp; Bates 2021, "A gentle introduction to conformal prediction", section 1).
 *       It needs k &lt;= n, that is n &gt;= 1/a - 1 held-out rows; fewer are refused with the count
 *       needed. Given the held-out rows, the rate that this threshold then has on new normal records
 *       varies from one held-out set to the next: it follows Beta(n + 1 - k, k) (the law of a
 *       uniform order statistic), whose upper quantile is the upper Clopper-Pearson limit of the
 *       n - k held-out exceedances that the screen reports.</li>
 *   <li>{@link #score(double)}: a fixed score, e.g. to move a threshold after looking at a
 *       screen.</li>
 * </ul>
 *
 * @param kind how the threshold is set
 * @param value the quantile q in (0, 1), the rate a in (0, 1), or the score (finite)
 */
public record ThresholdRule(Kind kind, double value) {

    /** How the threshold is set. */
    public enum Kind {
        /** At a quantile of the held-out scores. */
        QUANTILE,
        /** For an expected false-positive rate, by the rank of the held-out scores. */
        FALSE_POSITIVE_RATE,
        /** At a given score. */
        SCORE
    }

    /** Validates the value for its kind; the message names it. */
    public ThresholdRule {
        Require.notNull("kind", kind);
        switch (kind) {
            case QUANTILE -> Require.inOpen("quantile", value, 0.0, 1.0);
            case FALSE_POSITIVE_RATE -> Require.inOpen("rate", value, 0.0, 1.0);
            case SCORE -> Require.finite("score", value);
            default -> throw new AssertionError(kind);
        }
    }

    /**
     * @param q in (0, 1), e.g. 0.99
     * @return the threshold at the q-quantile of the held-out scores (type 7)
     */
    public static ThresholdRule quantile(double q) {
        return new ThresholdRule(Kind.QUANTILE, q);
    }

    /**
     * @param rate in (0, 1), e.g. 0.01
     * @return the threshold whose expected false-positive rate on records exchangeable with the
     *     held-out ones is at most {@code rate}
     */
    public static ThresholdRule falsePositiveRate(double rate) {
        return new ThresholdRule(Kind.FALSE_POSITIVE_RATE, rate);
    }

    /**
     * @param nats a finite score, nats per record in model space
     * @return the threshold at that score
     */
    public static ThresholdRule score(double nats) {
        return new ThresholdRule(Kind.SCORE, nats);
    }

    /**
     * The fewest held-out rows this rule can work with: 1 for a quantile or a fixed score,
     * ceil(1/a - 1) for a false-positive rate a (so that k = ceil((n + 1)(1 - a)) &lt;= n).
     *
     * @return at least 1
     */
    public int heldOutRowsNeeded() {
        if (kind != Kind.FALSE_POSITIVE_RATE) {
            return 1;
        }
        return (int) Math.max(1, Math.min(Integer.MAX_VALUE, Math.ceil(1.0 / value - 1.0 - RANK_SLACK)));
    }

    /**
     * k = ceil((n + 1)(1 - a)) for a false-positive rate a and n held-out scores.
     *
     * @param n the number of held-out scores
     * @return the rank, 1-based, of the held-out score the threshold sits at
     */
    public int rank(int n) {
        if (kind != Kind.FALSE_POSITIVE_RATE) {
            throw new IllegalStateException("the rule is " + kind + "; only a false-positive rate sets a rank");
        }
        return (int) Math.max(1, Math.ceil((n + 1.0) * (1.0 - value) - RANK_SLACK));
    }

    /**
     * Rounding slack of the ceilings above: (n + 1)(1 - a) is computed in double, and a product
     * that is an integer in exact arithmetic (n = 99, a = 0.01) may come out a few ulps above it.
     */
    private static final double RANK_SLACK = 1e-9;

    @Override
    public String toString() {
        return switch (kind) {
            case QUANTILE -> "quantile " + value + " of the held-out scores";
            case FALSE_POSITIVE_RATE -> "expected false-positive rate " + value;
            case SCORE -> "score " + value + " nats";
        };
    }
}
