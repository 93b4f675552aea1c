package org.backstep.internal.chain;

import org.backstep.internal.net.ReverseNetwork;
import org.backstep.option.FitOptions;
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
 */
public record ModelParts(FitOptions options, TableTransform transform, ReverseNetwork network, Estimator estimator,
                         Provenance provenance) {

    /** Checks that every part but the network is present. */
    public ModelParts {
        Require.notNull("options", options);
        Require.notNull("transform", transform);
        Require.notNull("estimator", estimator);
        Require.notNull("provenance", provenance);
    }

    /**
     * @param network a trained network
     * @return the parts of a model over that network
     */
    public static ModelParts ofNetwork(FitOptions options, TableTransform transform, ReverseNetwork network,
                                       Provenance provenance) {
        Require.notNull("network", network);
        return new ModelParts(options, transform, network, new NetworkEstimator(network), provenance);
    }

    /** @return the full reverse chain of these parts */
    public Chain chain() {
        return new Chain(options.continuousSchedule(), options.binarySchedule(),
                transform.modelledContinuous().length, transform.modelledBinary().length, options.variance(),
                estimator);
    }
}
