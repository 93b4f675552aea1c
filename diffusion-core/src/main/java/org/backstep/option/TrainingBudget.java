package org.backstep.option;

import org.backstep.schedule.Require;

import java.time.Duration;
import java.util.Locale;
import java.util.Objects;
import java.util.Optional;
import java.util.OptionalInt;

/**
 * How much training each model of a training plan gets: a fixed number of minibatch updates
 * (deterministic: the same seed and thread count give bit-identical models) or a wall-clock time
 * (the fair comparison on one machine, but the number of updates done depends on the machine's
 * speed and load, so two runs can differ).
 *
 * <p>With an update budget of U updates and B minibatches per epoch, training runs ceil(U / B)
 * epochs, the last one cut at U updates, and the learning-rate schedule anneals over the U updates.
 * With a wall-clock budget of W seconds, training stops after the first update that brings the
 * time spent on updates to W or more (held-out evaluations during training are not counted), and
 * the learning-rate schedule anneals over the time: after w seconds of updates the step size is
 * that of the fraction w / W of a run (for the cosine schedule, eta (1 + cos(pi w / W)) / 2,
 * Loshchilov &amp; Hutter 2017, eq. 5).
 */
public final class TrainingBudget {

    private final int updates;          // 0 for a wall-clock budget
    private final Duration wallClock;   // null for an update budget

    private TrainingBudget(int updates, Duration wallClock) {
        this.updates = updates;
        this.wallClock = wallClock;
    }

    /**
     * A fixed number of minibatch updates (Adam steps) per model: deterministic.
     *
     * @param updates at least 1
     * @return the budget
     * @throws IllegalArgumentException if {@code updates < 1}
     */
    public static TrainingBudget updates(int updates) {
        Require.atLeast("updates", updates, 1);
        return new TrainingBudget(updates, null);
    }

    /**
     * A wall-clock time of minibatch updates per model: not deterministic (see the class comment).
     *
     * @param wallClock the time, above zero
     * @return the budget
     * @throws IllegalArgumentException if {@code wallClock} is null, zero or negative
     */
    public static TrainingBudget wallClock(Duration wallClock) {
        Require.notNull("wallClock", wallClock);
        Duration time = wallClock;
        if (time.isZero() || time.isNegative()) {
            throw new IllegalArgumentException("wallClock is " + time + "; expected a duration above zero");
        }
        return new TrainingBudget(0, time);
    }

    /** @return the number of updates, for an update budget */
    public OptionalInt updates() {
        return wallClock == null ? OptionalInt.of(updates) : OptionalInt.empty();
    }

    /** @return the time, for a wall-clock budget */
    public Optional<Duration> wallClock() {
        return Optional.ofNullable(wallClock);
    }

    /** @return true for an update budget, whose models are the same in every run */
    public boolean isDeterministic() {
        return wallClock == null;
    }

    @Override
    public boolean equals(Object o) {
        return o instanceof TrainingBudget b && updates == b.updates && Objects.equals(wallClock, b.wallClock);
    }

    @Override
    public int hashCode() {
        return Objects.hash(updates, wallClock);
    }

    /** @return e.g. "2000 updates" or "30.0 s of updates (wall clock)" */
    @Override
    public String toString() {
        return wallClock == null ? updates + " updates"
                : String.format(Locale.ROOT, "%.1f s of updates (wall clock)", wallClock.toNanos() / 1e9);
    }
}
