package org.backstep.training;

/**
 * Receives training progress. Called on the training thread after every minibatch step that
 * finishes an epoch or a tenth of one; keep it quick. The library itself never prints: show a
 * progress bar here (the examples do).
 */
@FunctionalInterface
public interface TrainingListener {

    /** A listener that ignores everything. */
    TrainingListener NONE = p -> { };

    /**
     * @param progress where training is
     */
    void onProgress(TrainingProgress progress);
}
