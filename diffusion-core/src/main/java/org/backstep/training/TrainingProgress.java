package org.backstep.training;

import org.backstep.schedule.Require;

import java.util.OptionalDouble;

/**
 * A snapshot of training for a {@link TrainingListener}.
 *
 * @param epoch the current epoch, 1-based
 * @param epochs the planned number of epochs (in the last report of a run that stopped early, the
 *     epochs it ran: the plan ends there, so that a progress bar completes)
 * @param step minibatch steps done so far
 * @param totalSteps minibatch steps planned (in the last report of a run that stopped early, the steps
 *     it made)
 * @param loss the mean training loss of the current epoch so far
 * @param checkpointBound the latest held-out bound in nats per record (model space), if evaluated yet
 * @param rowsPerSecond training rows processed per second of wall time
 * @param secondsLeft estimated seconds until the planned end
 */
public record TrainingProgress(int epoch, int epochs, long step, long totalSteps, double loss,
                               OptionalDouble checkpointBound, double rowsPerSecond, double secondsLeft) {

    /** Checks that the bound is present (empty before the first evaluation). */
    public TrainingProgress {
        Require.notNull("checkpointBound", checkpointBound);
    }
}
