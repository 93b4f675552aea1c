package org.backstep.report;

import org.backstep.schedule.Require;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.Comparator;
import java.util.List;

/**
 * Which columns make a record unusual: for records x and each column j, the conditional surprisal
 * s_j = -log p(x_j | x_-j) in nats, how improbable the cell is under the model given the record's
 * other cells.
 *
 * <p><b>Estimator.</b> The other cells are held and cell j is drawn K times from the model's
 * conditional distribution by imputation (replacement with resampling rounds; Lugmayr et al. 2022,
 * algorithm 1; see {@code org.backstep.option.SurprisalOptions}). Then
 * <ul>
 *   <li>continuous column: within the draws' 5% and 95% quantiles (type 7), a Gaussian kernel
 *       density estimate of the K draws u_i at the observed value z_j (model space), with
 *       Silverman's bandwidth h = 0.9 min(sd, IQR/1.34) K^(-1/5) (Silverman 1986, "Density
 *       Estimation for Statistics and Data Analysis", eq. 3.31) made variance-preserving: the draws
 *       are shrunk toward their mean m by c = (1 + h^2/sd^2)^(-1/2) and the kernel's width is c h, so
 *       that the estimate has the draws' variance (the shrunk smoothed bootstrap of Silverman 1986,
 *       section 6.4.1; value from memory): s_j = -log [(1/K) sum_i N(z_j; m + c (u_i - m), c^2 h^2)],
 *       summed in log space. Beyond those quantiles the draws say little, and a kernel estimate
 *       falls off like its kernel, far too fast (measured on exact normal draws, K = 128: +1.2 nats
 *       at 3 sd, +9 at 4 sd, +52 at 6 sd); there the figure is the estimate at the nearer quantile e
 *       continued by the tail of the Gaussian of the draws' mean and sd,
 *       s_j = s(e) + ((z_j - m)^2 - (e - m)^2)/(2 sd^2);</li>
 *   <li>binary column: the share of draws equal to the observed value with half a draw added to
 *       each outcome, P = (#{u_i = x_j} + 1/2)/(K + 1) (Krichevsky &amp; Trofimov 1981), s_j = -log P,
 *       so at most log(2K + 2);</li>
 *   <li>a column that was constant in the training rows: 0 at its value, +infinity elsewhere; a
 *       cell beyond the model space's range or at or below 0 in a log column: +infinity (the other
 *       cells are then estimated given the record's cells that are in range);</li>
 *   <li>a missing cell: NaN (no figure), left out of the ranking; the others are estimated given
 *       the observed cells.</li>
 * </ul>
 *
 * <p><b>Bias.</b> (1) The draws carry the imputation's own error (the conditioning by replacement
 * is approximate; on the Gaussian oracle with 3 rounds its means are off by about 0.05 conditional
 * sd and its variance by about 2%; a continuous cell given a binary one is drawn too widely).
 * (2) Smoothing: for a Gaussian conditional N(m, s^2) the kernel estimate's expectation is N(m, s^2)
 * itself (to the draws' sample mean and sd); for others it is the conditional density smoothed by a
 * kernel of width c h, which flattens peaks and fills valleys. (3) The tail beyond the 5% and 95%
 * quantiles is Gaussian by assumption: right for a Gaussian conditional, too low a figure for a
 * heavier tail and too high for a lighter one; its noise grows with the distance (the draws' sd
 * enters squared). (4) The log of a noisy estimate is biased upward by about half its relative
 * variance. Measured on exact normal draws, K = 128: mean errors within 0.03 nats up to 3 sd,
 * 0.1 at 4 sd and 0.2 at 6 sd, rms 0.1 at the centre, 0.6 at 3 sd, 2.4 at 6 sd
 * ({@code SurprisalEstimatorTest}); on the Gaussian oracle with the default settings, mean error
 * 0.05 and rms 0.27 nats over ordinary cells, -9% (rms 17%) on cells 4 conditional sd off
 * ({@code SurprisalOracleTest}).
 *
 * <p><b>Units.</b> Model space: continuous figures are densities per standard deviation of the
 * column's training values (of their logs, for a log column), without the change of units
 * -log|dz/dx|, so that columns measured in different units compare; binary figures are
 * probabilities. Both are compared as they are when ranking (common practice, no source).
 *
 * <p>Caution: a surprisal says which cells the model finds improbable given the others, not which
 * sensor is at fault; a fault in one column can make another look improbable when the two are
 * tied. For safety-, health- or compliance-critical decisions, defer to local regulations and
 * qualified review.
 *
 * @param rows the rows of the screened table the figures are for, in the order of {@code nats}
 * @param columns the table's column names, in table order
 * @param nats nats[i][c], the surprisal of column c of record rows[i]
 * @param draws K, the draws per cell
 */
public record Surprisal(int[] rows, List<String> columns, double[][] nats, int draws) {

    /** Validates shapes and copies the arrays. */
    public Surprisal {
        Require.notNull("rows", rows);
        Require.notNull("nats", nats);
        columns = List.copyOf(Require.notNull("columns", columns));
        if (nats.length != rows.length) {
            throw new IllegalArgumentException("nats has " + nats.length + " records; expected " + rows.length
                    + " (one per row)");
        }
        rows = rows.clone();
        double[][] copy = new double[nats.length][];
        for (int i = 0; i < nats.length; i++) {
            if (nats[i] == null || nats[i].length != columns.size()) {
                throw new IllegalArgumentException("nats[" + i + "] has " + (nats[i] == null ? "no array (null)"
                        : nats[i].length + " values") + "; expected " + columns.size() + " (one per column)");
            }
            copy[i] = nats[i].clone();
        }
        nats = copy;
        Require.atLeast("draws", draws, 0);
    }

    /** @return an empty result (no record had figures computed) */
    public static Surprisal none(List<String> columns) {
        return new Surprisal(new int[0], columns, new double[0][], 0);
    }

    /** @return a copy of the rows */
    @Override
    public int[] rows() {
        return rows.clone();
    }

    /** @return a copy of the figures */
    @Override
    public double[][] nats() {
        double[][] copy = new double[nats.length][];
        for (int i = 0; i < nats.length; i++) {
            copy[i] = nats[i].clone();
        }
        return copy;
    }

    /** @return how many records have figures */
    public int records() {
        return rows.length;
    }

    /**
     * @param row a row of the screened table
     * @return its index in {@link #rows()}, or -1 if it has no figures
     */
    public int indexOf(int row) {
        for (int i = 0; i < rows.length; i++) {
            if (rows[i] == row) {
                return i;
            }
        }
        return -1;
    }

    /**
     * The columns of record {@code rows()[i]}, most surprising first (ties in table order); missing
     * cells are left out.
     *
     * @param i an index into {@link #rows()}
     * @return the ranked columns with their figures
     */
    public List<ColumnSurprisal> ranked(int i) {
        Require.inRange("i", i, 0, rows.length - 1);
        List<ColumnSurprisal> out = new ArrayList<>();
        for (int c = 0; c < columns.size(); c++) {
            if (!Double.isNaN(nats[i][c])) {
                out.add(new ColumnSurprisal(columns.get(c), nats[i][c]));
            }
        }
        out.sort(Comparator.comparingDouble(ColumnSurprisal::nats).reversed());
        return out;
    }

    /**
     * @param row a row of the screened table that has figures
     * @return its ranked columns, as {@link #ranked(int)}
     * @throws IllegalArgumentException if the row has no figures
     */
    public List<ColumnSurprisal> rankedForRow(int row) {
        int i = indexOf(row);
        if (i < 0) {
            throw new IllegalArgumentException("row is " + row + "; expected one of the rows with figures "
                    + Arrays.toString(rows));
        }
        return ranked(i);
    }

    /**
     * @param keep rows of the screened table
     * @return the figures of those of them that have any, in this result's order
     */
    public Surprisal restrictedTo(int[] keep) {
        Require.notNull("keep", keep);
        java.util.Set<Integer> wanted = new java.util.HashSet<>();
        for (int r : keep) {
            wanted.add(r);
        }
        List<Integer> idx = new ArrayList<>();
        for (int i = 0; i < rows.length; i++) {
            if (wanted.contains(rows[i])) {
                idx.add(i);
            }
        }
        int[] r = new int[idx.size()];
        double[][] n = new double[idx.size()][];
        for (int k = 0; k < r.length; k++) {
            r[k] = rows[idx.get(k)];
            n[k] = nats[idx.get(k)];
        }
        return new Surprisal(r, columns, n, draws);
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof Surprisal s && Arrays.equals(rows, s.rows) && columns.equals(s.columns)
                && Arrays.deepEquals(nats, s.nats) && draws == s.draws;
    }

    @Override
    public int hashCode() {
        return 31 * (31 * Arrays.hashCode(rows) + Arrays.deepHashCode(nats)) + columns.hashCode() + draws;
    }

    @Override
    public String toString() {
        return "Surprisal[" + rows.length + " records x " + columns.size() + " columns, " + draws + " draws per cell]";
    }
}
