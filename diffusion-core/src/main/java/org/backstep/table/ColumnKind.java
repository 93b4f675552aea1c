package org.backstep.table;

/**
 * What a table column holds. The kind decides how a column is diffused: continuous columns by
 * Gaussian noise after standardization, binary columns by the binomial diffusion of
 * Sohl-Dickstein et al. 2015 ("Deep Unsupervised Learning using Nonequilibrium Thermodynamics",
 * section 2.4 and appendix).
 */
public enum ColumnKind {
    /** Real numbers; every finite double is allowed. */
    CONTINUOUS,
    /** Exactly 0 or 1 in every non-missing cell. */
    BINARY
}
