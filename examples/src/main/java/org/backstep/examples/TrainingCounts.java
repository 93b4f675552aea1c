package org.backstep.examples;

import org.backstep.table.Table;
import org.backstep.training.Provenance;

import java.util.Locale;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * How the rows of the training part were used, in counts that add up: the part's rows are those
 * trained on, the checkpoint rows and the rows not used. The rows trained on include rows with a
 * missing cell, which the trainer fills by stochastic EM (Dempster, Laird &amp; Rubin 1977; see the
 * provenance's note); the model's provenance gives the rows trained on and the complete checkpoint
 * rows, its note on gaps the rows and cells filled.
 *
 * @param partWithGaps rows of the training part with a missing cell (before the trainer's split)
 * @param trained rows trained on ({@link Provenance#trainingRows()})
 * @param trainedWithGaps of them, the rows with a missing cell, filled by stochastic EM
 * @param filledCells the missing cells of those rows
 * @param refills how many times over the run the filled cells were drawn again from the model (the run's note)
 * @param checkpoint complete checkpoint rows ({@link Provenance#checkpointRows()})
 * @param notUsed the rest of the training part: see {@link #NOT_USED}
 * @param gapNote the provenance's sentence on the rows with gaps and how they were used, or "" when none had gaps
 */
record TrainingCounts(int partWithGaps, int trained, int trainedWithGaps, int filledCells, int refills, int checkpoint,
                      int notUsed, String gapNote) {

    /** What the rows not used are. */
    static final String NOT_USED = "checkpoint rows with a missing cell, since a bound needs every cell, and rows the"
            + " provenance notes as left out: without an observed cell, or with a cell beyond the model's range";

    /** The provenance's note on gaps: "N of M training rows had a missing cell (C cells); ... then R times ...". */
    private static final Pattern GAPS = Pattern.compile("^(\\d+) of (\\d+) training rows had a missing cell \\((\\d+) cells\\)");
    /** The run's note on the refills done: "the missing cells of the N training rows with a gap were drawn from the model R times". */
    private static final Pattern REFILLS = Pattern.compile("^the missing cells of the \\d+ training rows with a gap were drawn from the model (\\d+) times");

    /**
     * @param part the training part given to the fit
     * @param provenance the fitted model's provenance
     * @return the counts
     * @throws IllegalStateException if the provenance's note on gaps does not match its row count
     */
    static TrainingCounts of(Table part, Provenance provenance) {
        int trained = provenance.trainingRows();
        int checkpoint = provenance.checkpointRows();
        int withGaps = 0;
        int cells = 0;
        int refills = 0;
        String note = "";
        for (String n : provenance.notes()) {
            Matcher m = GAPS.matcher(n);
            if (m.find()) {
                if (Integer.parseInt(m.group(2)) != trained) {
                    throw new IllegalStateException("the provenance's note on gaps counts " + m.group(2) + " training rows, its"
                            + " row count " + trained + ": " + n);
                }
                withGaps = Integer.parseInt(m.group(1));
                cells = Integer.parseInt(m.group(3));
                note = n;
            }
            Matcher r = REFILLS.matcher(n);
            if (r.find()) {
                refills = Integer.parseInt(r.group(1));
            }
        }
        return new TrainingCounts(part.incompleteRowIndices().length, trained, withGaps, cells, refills, checkpoint,
                part.rows() - trained - checkpoint, note);
    }

    /** @return "trained on N of the P rows of the training part, ..." with how the rows with a missing cell were used */
    String trainedSentence(int partRows) {
        String head = String.format(Locale.ROOT, "trained on %d of the %d rows of the training part", trained, partRows);
        if (trainedWithGaps == 0) {
            return head + ", none with a missing cell";
        }
        return head + String.format(Locale.ROOT, ", %d of them with a missing cell (%d cells in all) filled by stochastic EM: "
                + "drawn from the model given the row's observed cells %d times over the run, and never learned as data",
                trainedWithGaps, filledCells, refills);
    }
}
