package org.backstep.bench.quality;

import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Set;

import org.backstep.option.Baseline;
import org.backstep.option.Coordinates;
import org.backstep.option.Marginals;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.table.Whitening;

/**
 * What the benchmark fits Backstep on: the table itself (the library's defaults), or the table after
 * one of the transforms of {@code org.backstep.table} fitted on the training rows. A lever builds the
 * transformed table itself and fits Backstep, at its defaults, on that; every density is taken back
 * to the caller's units by the transform's exact log-Jacobian, added by hand:
 * -log p_x(x) = -log p_e(e(x)) - log |de/dx|.
 */
enum Lever {
    /**
     * The table as it is, at the library's defaults (since issue 11's flip: coordinates WHITENED with
     * the N(0, I) part, the same fit as WHITENED_MODEL).
     */
    DEFAULTS("defaults", org.backstep.Defaults.BASELINE, org.backstep.Defaults.COORDINATES, org.backstep.Defaults.MARGINALS),
    /**
     * The library's defaults with the real continuous columns standardized (Marginals.STANDARDIZED):
     * the defaults before the maps were chosen at fit time.
     */
    STANDARDIZED_MARGINALS("defaults, standardized maps", org.backstep.Defaults.BASELINE,
            org.backstep.Defaults.COORDINATES, Marginals.STANDARDIZED),
    /** The library's defaults with normal scores always (Marginals.NORMAL_SCORES: bandwidth by the criterion, no comparison). */
    NORMAL_SCORES_MARGINALS("defaults, normal-scores maps", org.backstep.Defaults.BASELINE,
            org.backstep.Defaults.COORDINATES, Marginals.NORMAL_SCORES),
    /** The table as it is, standardized, no closed-form part: the library's defaults before issue 11's flip. */
    STANDARDIZED_NO_PART("standardized, no part (defaults before)"),
    /** Each continuous column mapped to its normal scores (NORMAL_SCORES, Silverman's bandwidth). */
    NORMAL_SCORES("normal scores", Baseline.NONE, Coordinates.STANDARDIZED, Lever.BANDWIDTH_MULTIPLE),
    /** The continuous columns standardized, then whitened by the training covariance. */
    WHITENED("whitened"),
    /** Normal scores, then whitened by the scores' training covariance (a Gaussian copula's space). */
    NORMAL_SCORES_WHITENED("scores+whitened", Baseline.NONE, Coordinates.STANDARDIZED, Lever.BANDWIDTH_MULTIPLE),
    /** The table as it is, fitted with the closed-form part of N(0, I) data (Baseline.STANDARD_NORMAL). */
    STANDARD_NORMAL_PART("N(0,I) part", Baseline.STANDARD_NORMAL),
    /**
     * Whitened as WHITENED, fitted with the N(0, I) part: a zero network is then the Gaussian fitted
     * on the training rows (diffusion in the whitened space).
     */
    WHITENED_STANDARD_NORMAL_PART("whitened+N(0,I) part", Baseline.STANDARD_NORMAL),
    /** The table as it is, fitted with the closed form of the fitted Gaussian (Baseline.FITTED_GAUSSIAN). */
    FITTED_GAUSSIAN_PART("fitted Gaussian part", Baseline.FITTED_GAUSSIAN),
    /**
     * The table as it is, fitted with the library's option coordinates WHITENED (the chain in the
     * space whitened by the shrunk training covariance, log |det W| added by the library) and the
     * N(0, I) part: what WHITENED_STANDARD_NORMAL_PART does outside the library, with imputation.
     */
    WHITENED_MODEL("whitened model+N(0,I) part", Baseline.STANDARD_NORMAL, Coordinates.WHITENED),
    /**
     * The library's option coordinates WHITENED with the closed form of a Gaussian mixture fitted on
     * the whitened training rows (Baseline.FITTED_MIXTURE, K by BIC): a zero network is that mixture.
     */
    WHITENED_MIXTURE_MODEL("whitened model+mixture part", Baseline.FITTED_MIXTURE, Coordinates.WHITENED),
    /** Normal scores (Silverman's bandwidth), then the library's defaults (whitened, N(0, I) part). */
    NORMAL_SCORES_MODEL("normal scores+defaults", org.backstep.Defaults.BASELINE, org.backstep.Defaults.COORDINATES,
            Lever.BANDWIDTH_MULTIPLE),
    /** Normal scores (twice Silverman's bandwidth), then the library's defaults. */
    NORMAL_SCORES2_MODEL("normal scores x2+defaults", org.backstep.Defaults.BASELINE, org.backstep.Defaults.COORDINATES,
            2.0),
    /** Normal scores (four times Silverman's bandwidth), then the library's defaults. */
    NORMAL_SCORES4_MODEL("normal scores x4+defaults", org.backstep.Defaults.BASELINE, org.backstep.Defaults.COORDINATES,
            4.0),
    /** Normal scores (eight times Silverman's bandwidth), then the library's defaults. */
    NORMAL_SCORES8_MODEL("normal scores x8+defaults", org.backstep.Defaults.BASELINE, org.backstep.Defaults.COORDINATES,
            8.0);

    /** The bandwidth of NORMAL_SCORES: Silverman's rule itself (no choice made on the test tables). */
    static final double BANDWIDTH_MULTIPLE = 1.0;

    final String label;
    /** The closed-form part the lever fits Backstep with. */
    final Baseline baseline;
    /** The coordinates the lever fits Backstep with. */
    final Coordinates coordinates;
    /**
     * The library's maps of the real continuous columns: the defaults' for DEFAULTS and the two
     * levers that name them; STANDARDIZED for every other lever (its own maps are applied outside).
     */
    final Marginals marginals;
    /** The multiple of Silverman's bandwidth of the lever's own normal scores, NaN when it maps none. */
    final double scoresMultiple;

    Lever(String label) {
        this(label, Baseline.NONE);
    }

    Lever(String label, Baseline baseline) {
        this(label, baseline, Coordinates.STANDARDIZED);
    }

    Lever(String label, Baseline baseline, Coordinates coordinates) {
        this(label, baseline, coordinates, Marginals.STANDARDIZED);
    }

    Lever(String label, Baseline baseline, Coordinates coordinates, Marginals marginals) {
        this(label, baseline, coordinates, marginals, Double.NaN);
    }

    /** Normal scores at {@code scoresMultiple} times Silverman's bandwidth applied outside the library. */
    Lever(String label, Baseline baseline, Coordinates coordinates, double scoresMultiple) {
        this(label, baseline, coordinates, Marginals.STANDARDIZED, scoresMultiple);
    }

    Lever(String label, Baseline baseline, Coordinates coordinates, Marginals marginals, double scoresMultiple) {
        this.label = label;
        this.baseline = baseline;
        this.coordinates = coordinates;
        this.marginals = marginals;
        this.scoresMultiple = scoresMultiple;
    }

    /** @return the builder of this lever's fit: the library's defaults with its baseline and coordinates */
    org.backstep.Backstep.Builder builder(long seed) {
        return org.backstep.Backstep.builder().seed(seed).baseline(baseline).coordinates(coordinates).marginals(marginals);
    }

    /**
     * Fits the lever's transform on the training rows.
     *
     * @param train the training rows (complete)
     * @return the fitted encoding
     */
    Encoding fit(Table train) {
        return switch (this) {
            case DEFAULTS, STANDARDIZED_MARGINALS, NORMAL_SCORES_MARGINALS, STANDARDIZED_NO_PART, STANDARD_NORMAL_PART, FITTED_GAUSSIAN_PART, WHITENED_MODEL,
                    WHITENED_MIXTURE_MODEL -> new Encoding(this, null, null, train);
            case NORMAL_SCORES, NORMAL_SCORES_MODEL, NORMAL_SCORES2_MODEL, NORMAL_SCORES4_MODEL, NORMAL_SCORES8_MODEL ->
                    new Encoding(this, TableTransform.fitNormalScores(train, scoresMultiple), null, train);
            case WHITENED, NORMAL_SCORES_WHITENED, WHITENED_STANDARD_NORMAL_PART -> {
                TableTransform columns = this != NORMAL_SCORES_WHITENED ? TableTransform.fit(train, Set.of())
                        : TableTransform.fitNormalScores(train, scoresMultiple);
                int nc = columns.modelledContinuous().length;
                double[][] y = columns.toModelSpace(train);
                double[][] block = new double[y.length][];
                for (int r = 0; r < y.length; r++) {
                    block[r] = Arrays.copyOf(y[r], nc);
                }
                yield new Encoding(this, columns, Whitening.fit(block), train);
            }
        };
    }

    /** @return the label */
    @Override
    public String toString() {
        return label;
    }

    /**
     * A fitted lever: e(x) = W (f(x) - m) with per-column maps f and an optional whitening W (or the
     * identity for DEFAULTS).
     */
    static final class Encoding {
        final Lever lever;
        private final TableTransform columns;
        private final Whitening whitening;
        private final List<String> names;
        private final List<ColumnKind> kinds;

        Encoding(Lever lever, TableTransform columns, Whitening whitening, Table train) {
            this.lever = lever;
            this.columns = columns;
            this.whitening = whitening;
            if (columns == null) {
                names = train.names();
                kinds = train.kinds();
            } else {
                int nc = columns.modelledContinuous().length;
                List<String> n = new ArrayList<>(columns.modelColumnNames());
                List<ColumnKind> k = new ArrayList<>();
                for (int j = 0; j < n.size(); j++) {
                    k.add(j < nc ? ColumnKind.CONTINUOUS : ColumnKind.BINARY);
                    if (whitening != null && j < nc) {
                        n.set(j, "w" + (j + 1));
                    }
                }
                names = List.copyOf(n);
                kinds = List.copyOf(k);
            }
        }

        /** @return whether the encoding is the identity (the table as it is) */
        boolean identity() {
            return columns == null;
        }

        /** @return whether imputation can run on the encoded table (not when columns are mixed) */
        boolean imputes() {
            return whitening == null;
        }

        /**
         * e(x) row by row; missing cells stay missing unless the encoding whitens (then rows must be complete).
         *
         * @param t rows in the caller's units
         * @return the encoded rows, as a table with continuous columns first
         */
        Table encode(Table t) {
            if (columns == null) {
                return t;
            }
            double[][] y = columns.toModelSpace(t);
            if (whitening != null) {
                int nc = whitening.dimensions();
                for (double[] row : y) {
                    double[] z = whitening.whiten(Arrays.copyOf(row, nc));
                    System.arraycopy(z, 0, row, 0, nc);
                }
            }
            return Table.of(names, kinds, y);
        }

        /**
         * The inverse of {@link #encode(Table)} (per-column encodings only).
         *
         * @param encoded encoded rows
         * @return the rows in the caller's units
         */
        Table decode(Table encoded) {
            if (columns == null) {
                return encoded;
            }
            if (whitening != null) {
                throw new IllegalStateException("a whitened encoding is not decoded cell by cell");
            }
            return columns.fromModelSpace(encoded.toArray());
        }

        /**
         * log |de/dx| per row: the per-column maps' log-Jacobians plus log |det W|.
         *
         * @param t complete rows in the caller's units
         * @return one value per row, nats
         */
        double[] logJacobian(Table t) {
            if (columns == null) {
                return new double[t.rows()];
            }
            double[] lj = columns.logJacobian(t);
            if (whitening != null) {
                for (int r = 0; r < lj.length; r++) {
                    lj[r] += whitening.logDeterminant();
                }
            }
            return lj;
        }
    }
}
