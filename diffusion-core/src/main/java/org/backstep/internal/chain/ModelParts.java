package org.backstep.internal.chain;

import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.FitOptions;
import org.backstep.option.Limits;
import org.backstep.schedule.Require;
import org.backstep.table.TableTransform;
import org.backstep.training.Provenance;

/**
 * What a fitted model is made of: the engine returns it (the trainer, the model file) and the
 * front door ({@code org.backstep.DiffusionModel}) is built from it, so nothing in the engine
 * builds the model.
 *
 * @param options every option of the fit
 * @param transform the column transforms fitted on the training rows
 * @param network the trained network; null where the estimator is a supplied closed form (tests)
 * @param estimator what the chain asks for predictions: the network, or a closed form
 * @param provenance how the model was made
 * @param range the training rows' range in the chain's coordinates, which sampled rows are checked against
 * @param whitening the whitening of the real continuous columns the chain runs in
 *     ({@code Coordinates.WHITENED}), or null for standardized coordinates
 */
public record ModelParts(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                         Provenance provenance, ModelRange range, org.backstep.table.Whitening whitening) {

    /**
     * Checks that every part but the network is present, that each column transform lies within
     * {@link Limits} (the trainer and the model file's loader both build parts, so a model that
     * trains also loads), and that the range has one entry per diffused column.
     */
    public ModelParts {
        Require.notNull("options", options);
        Require.notNull("transform", transform);
        Require.notNull("estimator", estimator);
        Require.notNull("provenance", provenance);
        Require.notNull("range", range);
        for (int c = 0; c < transform.names().size(); c++) {
            Limits.checkTransform(transform.names().get(c), transform.transform(c).shift(), transform.transform(c).scale());
        }
        int dc = transform.modelledContinuous().length;
        int d = transform.modelColumns();
        if (range.width() != d || range.continuous() != dc) {
            throw new IllegalArgumentException("range covers " + range.width() + " model columns (" + range.continuous()
                    + " continuous); the transform diffuses " + d + " (" + dc + " continuous)");
        }
        boolean wants = options.coordinates() == org.backstep.option.Coordinates.WHITENED;
        int whitened = Chain.whitenedColumns(transform).length;
        if (wants != (whitening != null) && !(wants && whitened == 0)) {
            throw new IllegalArgumentException("coordinates is " + options.coordinates() + " but the parts have "
                    + (whitening == null ? "no whitening" : "a whitening"));
        }
        if (whitening != null && whitening.dimensions() != whitened) {
            throw new IllegalArgumentException("the whitening has " + whitening.dimensions() + " columns; the transform has "
                    + whitened + " real continuous columns");
        }
    }

    /** Parts in standardized coordinates (no whitening). */
    public ModelParts(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                      Provenance provenance, ModelRange range) {
        this(options, transform, network, estimator, provenance, range, null);
    }

    /**
     * Parts whose range is not known: Samuelson's bound of the provenance's training rows (model
     * files of format versions 1 and 2), or none where there were fewer than 2 (a supplied estimator).
     */
    public ModelParts(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                      Provenance provenance) {
        this(options, transform, network, estimator, provenance, defaultRange(transform, provenance));
    }

    /**
     * Parts whose range is not known (as the five-argument constructor), run in the coordinates of
     * a whitening.
     *
     * @param whitening the whitening the chain runs in, or null
     */
    public ModelParts(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                      Provenance provenance, org.backstep.table.Whitening whitening) {
        this(options, transform, network, estimator, provenance, defaultRange(transform, provenance), whitening);
    }

    private static ModelRange defaultRange(TableTransform transform, Provenance provenance) {
        Require.notNull("transform", transform);
        Require.notNull("provenance", provenance);
        int dc = transform.modelledContinuous().length;
        int db = transform.modelledBinary().length + transform.modelledCategorical().length;   // discrete columns
        return provenance.trainingRows() >= 2 ? ModelRange.samuelson(dc, db, provenance.trainingRows())
                : ModelRange.none(dc, db);
    }

    /**
     * @param network a trained network
     * @param range the training rows' range in model space
     * @return the parts of a model over that network
     */
    public static ModelParts ofNetwork(FitOptions options, TableTransform transform, ReverseNetwork network,
                                       Provenance provenance, ModelRange range) {
        return ofNetwork(options, transform, network, null, provenance, range);
    }

    /**
     * @param network a trained network
     * @param baseline the closed-form part the network corrects, or null for none
     * @param range the training rows' range in model space
     * @return the parts of a model over that network and baseline
     */
    public static ModelParts ofNetwork(FitOptions options, TableTransform transform, ReverseNetwork network,
                                       ClosedFormPart baseline, Provenance provenance, ModelRange range) {
        return ofNetwork(options, transform, network, baseline, provenance, range, null);
    }

    /**
     * @param whitening the whitening the chain runs in, or null
     * @return the parts of a model over that network, baseline and whitening
     */
    public static ModelParts ofNetwork(FitOptions options, TableTransform transform, ReverseNetwork network,
                                       ClosedFormPart baseline, Provenance provenance, ModelRange range,
                                       org.backstep.table.Whitening whitening) {
        Require.notNull("network", network);
        return new ModelParts(options, transform, network, new NetworkEstimator(network, baseline,
                options.variance() == org.backstep.option.ReverseVariance.LEARNED), provenance, range, whitening);
    }

    /** @return the closed-form part of the estimator when it is one Gaussian, or null */
    public GaussianBaseline baseline() {
        return estimator.baseline();
    }

    /** @return the closed-form part of the estimator (a Gaussian or a mixture), or null when it has none */
    public ClosedFormPart closedForm() {
        return estimator.closedForm();
    }

    /** @return the full reverse chain of these parts */
    public Chain chain() {
        return Chain.of(options, transform, estimator, whitening);
    }
}
