package org.backstep.examples;

import org.backstep.table.Table;
import org.backstep.training.Provenance;

import java.util.Locale;

/**
 * How the rows of the training part were used, in counts that add up: the part's rows are those
 * trained on, the checkpoint rows and the rows not used. The rows trained on include rows with a
 * missing cell, which the trainer fills by stochastic EM (Dempster, Laird &amp; Rubin 1977; see the
 * provenance's note); the model's provenance gives every count but the training part's own.
 *
 * @param partWithGaps rows of the training part with a missing cell (before the trainer's split)
 * @param trained rows trained on ({@link Provenance#trainingRows()})
 * @param trainedWithGaps of them, the rows with a missing cell, filled by stochastic EM
 * @param filledCells the missing cells of those rows
 * @param refills how many times over the run the filled cells were drawn again from the model
 * @param checkpoint complete checkpoint rows ({@link Provenance#checkpointRows()})
 * @param notUsed the rest of the training part: see {@link #NOT_USED}
 */
record TrainingCounts(int partWithGaps, int trained, int trainedWithGaps, int filledCells, int refills, int checkpoint,
                      int notUsed) {

    /** What the rows not used are. */
    static final String NOT_USED = "checkpoint rows with a missing cell, since a bound needs every cell, and rows the"
            + " provenance notes as left out: without an observed cell, or with a cell beyond the model's range";

    /**
     * @param part the training part given to the fit
     * @param provenance the fitted model's provenance (a fresh fit: its gap counts are recorded)
     * @return the counts
     * @throws IllegalStateException if the provenance does not record its gap counts (a model file
     *     written before they were)
     */
    static TrainingCounts of(Table part, Provenance provenance) {
        int trained = provenance.trainingRows();
        int checkpoint = provenance.checkpointRows();
        if (provenance.rowsWithGaps() < 0) {
            throw new IllegalStateException("the model's provenance does not record its rows with gaps (a model file"
                    + " written before format 4 recorded them)");
        }
        return new TrainingCounts(part.incompleteRowIndices().length, trained, provenance.rowsWithGaps(),
                provenance.filledCells(), provenance.refills(), checkpoint, part.rows() - trained - checkpoint);
    }

    /**
     * @param partRows rows of the training part
     * @param whitened whether the model was fitted with coordinates WHITENED (the library's default)
     * @return "trained on N of the P rows of the training part, ..." with how the rows with a missing cell were used
     */
    String trainedSentence(int partRows, boolean whitened) {
        String head = String.format(Locale.ROOT, "trained on %d of the %d rows of the training part", trained, partRows);
        if (trainedWithGaps == 0) {
            return head + ", none with a missing cell";
        }
        if (whitened) {
            return head + String.format(Locale.ROOT, ", %d of them with a missing cell (%d cells in all): a missing"
                    + " continuous cell drawn afresh at every use from the conditional distribution of the Gaussian"
                    + " fitted by EM, given the row's observed continuous cells; any other missing cell filled by"
                    + " stochastic EM (drawn from the model %d times over the run, never learned as data)",
                    trainedWithGaps, filledCells, refills);
        }
        return head + String.format(Locale.ROOT, ", %d of them with a missing cell (%d cells in all) filled by stochastic EM: "
                + "drawn from the model given the row's observed cells %d times over the run, and never learned as data",
                trainedWithGaps, filledCells, refills);
    }
}
