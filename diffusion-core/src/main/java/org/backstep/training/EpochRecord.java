package org.backstep.training;

import org.backstep.schedule.Require;

import java.util.OptionalDouble;

/**
 * One epoch of the training history kept in a fitted model.
 *
 * @param epoch the epoch, 1-based
 * @param loss the mean training loss over the epoch's minibatches
 * @param checkpointBound the held-out bound, nats per record in model space (Monte Carlo estimate
 *     with the averaged weights), where it was evaluated at this epoch
 * @param seconds wall time since training started, at the end of this epoch
 */
public record EpochRecord(int epoch, double loss, OptionalDouble checkpointBound, double seconds) {

    /** Checks that the bound is present (empty where it was not evaluated). */
    public EpochRecord {
        Require.notNull("checkpointBound", checkpointBound);
    }
}
