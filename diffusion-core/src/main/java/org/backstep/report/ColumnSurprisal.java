package org.backstep.report;

/**
 * How surprising one cell of a record is given the record's other cells.
 *
 * @param column the column's name
 * @param nats -log p(x_j | x_-j), model space (see {@link Surprisal}); +infinity for a cell the
 *     model gives probability zero or cannot hold
 */
public record ColumnSurprisal(String column, double nats) {

    /** Refuses a null column name. */
    public ColumnSurprisal {
        java.util.Objects.requireNonNull(column, "column is null; expected a value");
    }
}
