package org.backstep.table;

/**
 * What a table column holds. The kind decides how a column is diffused: continuous columns by
 * Gaussian noise after standardization, binary columns by the binomial diffusion of
 * Sohl-Dickstein et al. 2015 ("Deep Unsupervised Learning using Nonequilibrium Thermodynamics",
 * section 2.4 and appendix), categorical columns by the multinomial diffusion of Hoogeboom et al.
 * 2021 ("Argmax Flows and Multinomial Diffusion", section 4), of which the binomial diffusion is the
 * case of two categories.
 */
public enum ColumnKind {
    /** Real numbers; every finite double is allowed. */
    CONTINUOUS,
    /** Exactly 0 or 1 in every non-missing cell. */
    BINARY,
    /**
     * One of K labelled categories (K from 1 up to {@link Table#MAX_CATEGORIES}); a cell holds the
     * category's index 0..K-1 into the column's labels ({@link Table#categories(int)}), kept in
     * first-seen order by the CSV reader.
     */
    CATEGORICAL,
    /**
     * Whole numbers (counts, ordinal codes), every non-missing cell an integer within +-2^52: diffused
     * as a continuous column after standardization, with the discretized Gaussian decoder of Ho et
     * al. 2020 (eq. 13) over unit-wide bins, so that its part of a score is a probability mass and its
     * samples and imputations are integers.
     */
    INTEGER
}
