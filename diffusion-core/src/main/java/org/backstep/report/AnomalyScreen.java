package org.backstep.report;

import org.backstep.schedule.Require;

import org.backstep.table.Table;

import java.util.List;
import java.util.Locale;

/**
 * A threshold on the per-record bound, taken at a quantile of held-out records, and the records of
 * a table whose bound is past it.
 *
 * <p>Caution: the score ranks records by how unusual they are under the model. It is not a
 * calibrated probability of a fault, and a flag is a prompt for a look, not a finding. For
 * safety-, health- or compliance-critical decisions, defer to local regulations and qualified
 * review.
 *
 * @param quantile the held-out quantile chosen, e.g. 0.99
 * @param threshold the bound (nats per record, model space) at that quantile of the held-out records
 * @param scores the bound of every screened record, in row order
 * @param flagged the row indices whose score exceeds the threshold, in row order
 */
public record AnomalyScreen(double quantile, double threshold, double[] scores, int[] flagged) {

    /** Copies the arrays. */
    public AnomalyScreen {
        Require.notNull("scores", scores);
        Require.notNull("flagged", flagged);
        scores = scores.clone();
        flagged = flagged.clone();
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
        return java.util.Arrays.stream(flagged).boxed().toList();
    }

    @Override
    public String toString() {
        return String.format(Locale.ROOT, "AnomalyScreen[quantile %.4f, threshold %.4f nats, %d of %d flagged]",
                quantile, threshold, flagged.length, scores.length);
    }
}
