package org.backstep.internal.screen;

import org.backstep.internal.chain.Engine;
import org.backstep.internal.chain.Imputer;
import org.backstep.option.BoundOptions;
import org.backstep.option.ScoreSource;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.ThresholdRule;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.CellNote;
import org.backstep.report.Surprisal;
import org.backstep.table.Table;

import java.util.Arrays;
import java.util.Locale;
import java.util.function.Function;

/**
 * The screen: held-out and screened records scored alike ({@link Scoring}, one seed, so both share
 * their draws), the threshold set from the held-out scores by the options' {@link ThresholdRule},
 * the records above it flagged, and their per-column surprisal estimated
 * ({@link SurprisalEstimator}).
 */
public final class Screener {

    /** Keeps the surprisal's draws apart from the scores' shared noise of the same seed. */
    static final long SURPRISAL_SALT = 0x5A11E5CEL;

    private Screener() {
    }

    /**
     * @param engine the model's engine
     * @param heldOut records not trained on (layout checked by the caller)
     * @param records records to screen (layout checked by the caller)
     * @param how threshold, bound, missing cells and surprisal
     * @param seed the seed of every draw
     * @return the screen with its evidence
     * @throws IllegalArgumentException if a held-out record cannot be scored (naming row and column),
     *     if a missing cell is refused, or if the held-out rows are too few for the rule
     */
    public static AnomalyScreen screen(Engine engine, Table heldOut, Table records, ScreeningOptions how, long seed) {
        BoundOptions bound = how.bound();
        ThresholdRule rule = how.threshold();
        if (heldOut.rows() < rule.heldOutRowsNeeded()) {
            throw tooFew(rule, heldOut.rows());
        }
        Function<Table, double[]> scorer = how.source() == ScoreSource.FLOW
                ? complete -> Scoring.flow(engine, complete, how.flow())
                : complete -> Scoring.bound(engine, complete, bound, seed);
        Scoring.Scored held = Scoring.score(engine, heldOut, scorer, how.missing(), "heldOut", seed);
        for (CellNote n : held.notes()) {
            if (n.unscorable()) {
                throw new IllegalArgumentException(String.format(Locale.ROOT, "heldOut row %d, column '%s' is %s, %s;"
                        + " held-out rows set the threshold and must be scorable (drop the row, or screen it among"
                        + " the records)", n.row(), n.column(), n.value(), n.kind() == CellNote.Kind.BEYOND_RANGE
                        ? "beyond the model space's range" : "outside the column's support (probability zero)"));
            }
        }
        Scoring.Scored scored = Scoring.score(engine, records, scorer, how.missing(), "records", seed);
        double threshold = threshold(rule, held.scores());
        int[] flagged = AnomalyScreen.flaggedAt(scored.scores(), threshold);
        Surprisal surprisal = how.surprisal().draws() == 0 || flagged.length == 0
                ? Surprisal.none(records.names())
                : SurprisalEstimator.estimate(engine, records, flagged, how.surprisal(), seed ^ SURPRISAL_SALT);
        return new AnomalyScreen(rule, threshold, held.scores(), scored.scores(), flagged, scored.notes(), surprisal);
    }

    /**
     * The threshold a rule sets from held-out scores: the type-7 quantile, the k-th smallest score
     * with k = ceil((n + 1)(1 - a)), or the given score.
     *
     * @param rule the rule
     * @param held the held-out scores, finite, at least one
     * @return the threshold
     * @throws IllegalArgumentException if the rate needs more held-out scores than given
     */
    public static double threshold(ThresholdRule rule, double[] held) {
        return switch (rule.kind()) {
            case QUANTILE -> Imputer.quantile(held, rule.value());
            case SCORE -> rule.value();
            case FALSE_POSITIVE_RATE -> {
                int n = held.length;
                int k = rule.rank(n);
                if (n < rule.heldOutRowsNeeded() || k > n) {
                    throw tooFew(rule, n);
                }
                double[] s = held.clone();
                Arrays.sort(s);
                yield s[k - 1];
            }
        };
    }

    private static IllegalArgumentException tooFew(ThresholdRule rule, int n) {
        return new IllegalArgumentException(String.format(Locale.ROOT,
                "heldOut has %d rows; an expected false-positive rate of %s needs at least %d held-out rows (the "
                        + "threshold is the k-th smallest of the n held-out scores, k = ceil((n + 1)(1 - rate)), "
                        + "which must be at most n); give more held-out rows or a higher rate",
                n, rule.value(), rule.heldOutRowsNeeded()));
    }
}
