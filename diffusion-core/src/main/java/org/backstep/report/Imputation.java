package org.backstep.report;

import org.backstep.table.Table;

import java.util.List;

/**
 * Completions of records with missing cells, drawn from the model's conditional distribution of the
 * missing cells given the observed ones. Observed cells are returned unchanged in every table.
 *
 * <p>Caution: imputed values are not measurements; they are draws from a model of the training
 * data and carry its blind spots.
 *
 * @param draws the k completed tables, one per draw
 * @param mean the per-cell mean of the draws (for binary cells, the share of draws that are 1)
 * @param lower the per-cell lower end of the central interval at {@link #level()}
 * @param upper the per-cell upper end
 * @param level the interval's coverage, e.g. 0.9
 */
public record Imputation(List<Table> draws, Table mean, Table lower, Table upper, double level) {

    /** Copies the list. */
    public Imputation {
        draws = List.copyOf(draws);
    }
}
