package org.backstep.training;

import org.backstep.schedule.Require;

import org.backstep.option.FitOptions;

import org.backstep.table.Table;

import java.io.IOException;
import java.io.InputStream;
import java.util.List;
import java.util.Properties;

/**
 * How a model was made: enough to say where it came from and to rebuild it (every option is in
 * {@link FitOptions}; this adds the machine, the data's fingerprint and the training history).
 *
 * @param libraryVersion Backstep's version, from the build
 * @param javaVersion the Java runtime's version
 * @param os the operating system's name and version
 * @param arch the processor architecture
 * @param fittedAt when training finished (UTC)
 * @param trainingSeconds wall time of training
 * @param tableRows rows of the table given to fit
 * @param trainingRows rows trained on: the training part's rows with an observed cell (those with a
 *     missing cell trained on with the cell filled, as the notes say)
 * @param checkpointRows complete checkpoint rows (the trainer's own split, on which the kept weights were chosen)
 * @param rowsWithGaps of the rows trained on, those with a missing cell, whose cells the trainer
 *     filled by stochastic EM; -1 when not recorded (a model file written before this count)
 * @param filledCells the missing cells of those rows; -1 when not recorded
 * @param refills how many times over the run the filled cells were drawn again from the model; -1
 *     when not recorded
 * @param tableSha256 SHA-256 of the table given to fit ({@link Table#sha256()})
 * @param history one record per epoch
 * @param notes what the fit decided on its own (dropped rows, constant columns, early stop)
 */
public record Provenance(String libraryVersion, String javaVersion, String os, String arch, String fittedAt,
                         double trainingSeconds, int tableRows, int trainingRows, int checkpointRows,
                         int rowsWithGaps, int filledCells, int refills,
                         String tableSha256, List<EpochRecord> history, List<String> notes) {

    /** Checks that every part is present and copies the lists. */
    public Provenance {
        Require.notNull("libraryVersion", libraryVersion);
        Require.notNull("javaVersion", javaVersion);
        Require.notNull("os", os);
        Require.notNull("arch", arch);
        Require.notNull("fittedAt", fittedAt);
        Require.notNull("tableSha256", tableSha256);
        Require.notNull("history", history);
        Require.notNull("notes", notes);
        Require.inRange("rowsWithGaps", rowsWithGaps, -1, Integer.MAX_VALUE);
        Require.inRange("filledCells", filledCells, -1, Integer.MAX_VALUE);
        Require.inRange("refills", refills, -1, Integer.MAX_VALUE);
        history = List.copyOf(history);
        notes = List.copyOf(notes);
    }

    /**
     * The provenance of a fit that ends now, on this JVM and machine.
     *
     * @param tableRows rows of the table given to fit
     * @param tableSha256 its {@link Table#sha256()}
     * @param trainingRows rows trained on
     * @param checkpointRows complete checkpoint rows
     * @param rowsWithGaps of the rows trained on, those with a missing cell
     * @param filledCells their missing cells
     * @param refills how many times the filled cells were drawn again from the model
     * @param seconds wall time of training
     * @param history one record per epoch
     * @param notes what the fit decided on its own
     * @return the provenance
     */
    public static Provenance ofFit(int tableRows, String tableSha256, int trainingRows, int checkpointRows,
                                   int rowsWithGaps, int filledCells, int refills,
                                   double seconds, List<EpochRecord> history, List<String> notes) {
        return new Provenance(currentLibraryVersion(), System.getProperty("java.version"),
                System.getProperty("os.name") + " " + System.getProperty("os.version"), System.getProperty("os.arch"),
                java.time.Instant.now().toString(), seconds, tableRows, trainingRows, checkpointRows, rowsWithGaps,
                filledCells, refills, tableSha256,
                history, notes);
    }

    /**
     * This provenance with notes added after its own, everything else kept but (when given) the
     * training time: for a fit that goes on after its run, such as a choice between two runs.
     *
     * @param more the notes to add, in order (not modified)
     * @param trainingSeconds the wall time of training to record, or NaN to keep {@link #trainingSeconds()}
     * @return the provenance
     * @throws IllegalArgumentException if {@code more} is null
     */
    public Provenance withMoreNotes(List<String> more, double trainingSeconds) {
        Require.notNull("more", more);
        List<String> all = new java.util.ArrayList<>(notes);
        all.addAll(more);
        return new Provenance(libraryVersion, javaVersion, os, arch, fittedAt,
                Double.isNaN(trainingSeconds) ? this.trainingSeconds : trainingSeconds, tableRows, trainingRows,
                checkpointRows, rowsWithGaps, filledCells, refills, tableSha256, history, all);
    }

    /** @return the version written into the jar by the Maven build, or "unknown" */
    public static String currentLibraryVersion() {
        try (InputStream in = Provenance.class.getResourceAsStream("/org/backstep/version.properties")) {
            if (in == null) {
                return "unknown";
            }
            Properties p = new Properties();
            p.load(in);
            return p.getProperty("version", "unknown");
        } catch (IOException e) {
            return "unknown";
        }
    }
}
