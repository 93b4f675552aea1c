package org.backstep.report;

import org.backstep.schedule.Require;

import org.backstep.table.Table;

import java.util.List;

/**
 * Completions of records with missing cells, drawn from the model's conditional distribution of the
 * missing cells given the observed ones. Observed cells are returned unchanged in every table.
 *
 * <p>The interval runs between the empirical quantiles (1 - level)/2 and (1 + level)/2 of the k
 * draws at positions (k + 1) p among the sorted draws (Hyndman &amp; Fan 1996, "Sample quantiles in
 * statistical packages", type 6, linear between order statistics, clamped to the smallest and
 * largest draw). A new exchangeable value falls between the order statistics X_(i) and X_(j) of k
 * draws with probability (j - i) / (k + 1) (F(X_(i)) is Beta(i, k - i + 1), of mean i / (k + 1): a
 * standard result on order statistics, value from memory), so when the draws come from the exact
 * conditional distribution the interval covers a new value with probability about {@code level} as soon as
 * k &gt;= (1 + level)/(1 - level), i.e. from 19 draws at level 0.9 (the default 20 draws: 90%);
 * with fewer draws the interval is the range of the draws and covers about (k - 1)/(k + 1).
 * {@link #expectedCoverage()} gives the figure. (Until issue 11 the ends were type-7 quantiles,
 * which cover about level (k - 1)/(k + 1): 81% at k = 20, 88% at k = 100.)
 *
 * <p>Caution: imputed values are not measurements; they are draws from a model of the training
 * data and carry its blind spots.
 *
 * <p>Categorical cells have no mean or interval: {@link #categoryShares(int, int)} gives the share of
 * the draws in each category and {@link #mostLikely(int, int)} the most frequent one; the mean,
 * lower and upper tables hold that category's index there.
 *
 * @param draws the k completed tables, one per draw
 * @param mean the per-cell mean of the draws (for binary cells, the share of draws that are 1; for
 *     categorical cells, the index of the most frequent category)
 * @param lower the per-cell lower end of the central interval at {@link #level()}
 * @param upper the per-cell upper end
 * @param level the interval's coverage, e.g. 0.9
 */
public record Imputation(List<Table> draws, Table mean, Table lower, Table upper, double level) {

    /** Copies the list. */
    public Imputation {
        Require.notNull("draws", draws);
        Require.notNull("mean", mean);
        Require.notNull("lower", lower);
        Require.notNull("upper", upper);
        draws = List.copyOf(draws);
    }

    /**
     * The probability that the interval covers a new value drawn from the same distribution as the
     * draws (see the class comment): (j - i)/(k + 1) with i = (k + 1)(1 - level)/2 and
     * j = (k + 1)(1 + level)/2, each kept within [1, k]; {@code level} itself when
     * k &gt;= (1 + level)/(1 - level). What a perfect model's intervals would cover, about (the
     * interpolation between draws makes it approximate; simulated in ImputationTest).
     *
     * @return the expected coverage of the intervals, at most {@link #level()}
     */
    public double expectedCoverage() {
        int k = draws.size();
        double i = Math.min(k, Math.max(1.0, (k + 1) * (1.0 - level) / 2.0));
        double j = Math.min(k, Math.max(1.0, (k + 1) * (1.0 + level) / 2.0));
        return (j - i) / (k + 1);
    }

    /**
     * The share of the draws in each category of a categorical cell (the observed category has
     * share 1 when the cell was observed).
     *
     * @param row a row index, 0-based
     * @param column the index of a categorical column
     * @return one share per category, in the column's label order, summing to 1
     * @throws IllegalArgumentException if an index is out of range or the column is not categorical
     */
    public double[] categoryShares(int row, int column) {
        Table first = draws.get(0);
        if (first.kind(column) != org.backstep.table.ColumnKind.CATEGORICAL) {
            throw new IllegalArgumentException("column '" + first.name(column) + "' is " + first.kind(column)
                    + "; expected a CATEGORICAL column");
        }
        double[] shares = new double[first.categories(column).size()];
        for (Table t : draws) {
            shares[(int) t.get(row, column)] += 1.0 / draws.size();
        }
        return shares;
    }

    /**
     * @param row a row index, 0-based
     * @param column the index of a categorical column
     * @return the label of the category most frequent among the draws (the first in label order on a tie)
     * @throws IllegalArgumentException if an index is out of range or the column is not categorical
     */
    public String mostLikely(int row, int column) {
        double[] shares = categoryShares(row, column);
        int best = 0;
        for (int k = 1; k < shares.length; k++) {
            if (shares[k] > shares[best]) {
                best = k;
            }
        }
        return draws.get(0).categories(column).get(best);
    }
}
