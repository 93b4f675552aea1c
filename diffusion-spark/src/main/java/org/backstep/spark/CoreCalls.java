package org.backstep.spark;

import org.backstep.Defaults;
import org.backstep.option.BoundOptions;
import org.backstep.option.DenoisingOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.SamplingPlan;
import org.backstep.option.SurprisalOptions;
import org.backstep.report.DriftReport;
import org.backstep.report.Surprisal;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.List;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;

/**
 * Every call this module makes into diffusion-core, in one place, so that a change of the core's
 * job signatures is met here only. Scoring runs on batches of records, each record with its own
 * seed ({@link DiffusionModel#bound(Table, BoundOptions, long[])}), and so does the scoring for
 * drift (common random numbers, {@link DiffusionModel#screeningScores}), imputation, denoising and
 * sampling (each record from its own seed); the surprisal of a flagged row runs on one record per
 * call (the core takes one seed per call for it; flagged rows are few).
 */
final class CoreCalls {

    private CoreCalls() {
    }

    /** @return the exact bound over all T steps for 0 draws, else the Monte Carlo bound with that many steps */
    static BoundOptions boundOf(int draws) {
        return draws == 0 ? BoundOptions.exact() : BoundOptions.sampled(draws);
    }

    /**
     * The negative variational bound of each record in nats (model space), record i drawing from
     * its own seed ({@link DiffusionModel#bound(Table, BoundOptions, long[])}): exact over all T
     * steps when {@code draws} is 0, else the Monte Carlo estimate with {@code draws} steps.
     */
    static double[] score(DiffusionModel model, Table rows, int draws, long[] rowSeeds) {
        return model.bound(rows, boundOf(draws), rowSeeds).nats();
    }

    /**
     * The scores of a screen and of the drift tests ({@link DiffusionModel#screeningScores}): every
     * record shares the draws of {@code seed}, +infinity for a record the model cannot score.
     */
    static double[] commonScores(DiffusionModel model, Table rows, int draws, long seed) {
        return model.screeningScores(rows, boundOf(draws), seed);
    }

    /** The drift tests of two batches from their common-random-number scores ({@link DiffusionModel#drift(Table, double[], Table, double[])}). */
    static DriftReport drift(DiffusionModel model, Table reference, double[] referenceScores, Table batch,
                             double[] batchScores) {
        return model.drift(reference, referenceScores, batch, batchScores);
    }

    /** The per-column surprisal of records ({@link DiffusionModel#surprisal(Table, SurprisalOptions, long)}). */
    static Surprisal surprisal(DiffusionModel model, Table rows, int draws, int steps, int rounds, long seed) {
        return model.surprisal(rows, new SurprisalOptions(draws, steps, rounds), seed);
    }

    /** @return the core's default surprisal settings: draws, steps, rounds */
    static int[] surprisalDefaults() {
        SurprisalOptions d = Defaults.surprisal();
        return new int[] {d.draws(), d.steps(), d.rounds()};
    }

    /** @return the fewest draws per cell a surprisal takes */
    static int fewestSurprisalDraws() {
        return SurprisalOptions.FEWEST_DRAWS;
    }

    /**
     * {@link DiffusionModel#impute(Table, ImputationOptions, long[])}: a batch of records, record i
     * drawing from its own seed, at the default steps, rounds and method.
     */
    static Imputation impute(DiffusionModel model, Table rows, int draws, double level, long[] rowSeeds) {
        return model.impute(rows, Defaults.imputation().withDraws(draws).withLevel(level), rowSeeds);
    }

    /** {@link DiffusionModel#denoise(Table, DenoisingOptions, long[])}: a batch of records, record i drawing from its own seed. */
    static Denoising denoise(DiffusionModel model, Table rows, double[] noiseSd, int draws, long[] rowSeeds) {
        return model.denoise(rows, Defaults.denoising(noiseSd).withDraws(draws), rowSeeds);
    }

    /**
     * {@link DiffusionModel#sample(SamplingPlan, long[])}: ancestral sampling through all T steps,
     * record i from its own seed.
     */
    static Table sample(DiffusionModel model, long[] rowSeeds) {
        return model.sample(SamplingPlan.ancestral(), rowSeeds);
    }

    /** @return the labels of each categorical column of the training table, by column name */
    static java.util.Map<String, List<String>> categories(DiffusionModel model) {
        return model.transform().categories();
    }

    /**
     * Fits a model by the core's builder with the given settings (0 or an empty array: the core's
     * default) and the given column transforms ({@link Backstep.Builder#fit(Table, TableTransform)}).
     */
    static DiffusionModel fit(Table training, TableTransform transform, int steps, int[] hidden, int epochs,
                              java.util.Set<String> logColumns, long seed) {
        Backstep.Builder b = Backstep.builder().seed(seed).logColumns(logColumns.toArray(String[]::new));
        if (steps > 0) {
            b.steps(steps);
        }
        if (hidden.length > 0) {
            b.hidden(hidden);
        }
        if (epochs > 0) {
            b.epochs(epochs);
        }
        return b.fit(training, transform);
    }

    /** @return the training table's column names, in order */
    static List<String> names(DiffusionModel model) {
        return model.transform().names();
    }

    /** @return the training table's column kinds, in order */
    static List<ColumnKind> kinds(DiffusionModel model) {
        return model.transform().kinds();
    }

    /** The bytes of the model file ({@link DiffusionModel#save(Path)}), by way of a temporary file. */
    static byte[] toBytes(DiffusionModel model) {
        Path dir = null;
        try {
            dir = Files.createTempDirectory("backstep-model");
            Path file = dir.resolve("model.backstep");
            model.save(file);
            return Files.readAllBytes(file);
        } catch (IOException e) {
            throw new UncheckedIOException("could not write the model to a temporary file", e);
        } finally {
            deleteQuietly(dir);
        }
    }

    /** A model from the bytes of its file ({@link DiffusionModel#load(Path)}), by way of a temporary file. */
    static DiffusionModel fromBytes(byte[] bytes) {
        Path dir = null;
        try {
            dir = Files.createTempDirectory("backstep-model");
            Path file = dir.resolve("model.backstep");
            Files.write(file, bytes);
            return DiffusionModel.load(file);
        } catch (IOException e) {
            throw new UncheckedIOException("could not load the model from its bytes: " + e.getMessage(), e);
        } finally {
            deleteQuietly(dir);
        }
    }

    private static void deleteQuietly(Path dir) {
        if (dir == null) {
            return;
        }
        try (var files = Files.list(dir)) {
            for (Path p : (Iterable<Path>) files::iterator) {
                Files.deleteIfExists(p);
            }
            Files.deleteIfExists(dir);
        } catch (IOException e) {
            dir.toFile().deleteOnExit();
        }
    }
}
