package org.backstep.examples;

import org.backstep.Defaults;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * The values of a command line, as {@link Option}s set them; each field starts at its default. One
 * holder for all commands, so that an option has one default wherever it is accepted.
 */
final class Settings {

    /** Default of --out. */
    static final String OUT = "backstep-report";
    /** Default of --holdout: every fifth row is held out. */
    static final int HOLDOUT = 5;
    /** Default of --tolerance, in nats per dimension. */
    static final double TOLERANCE = 0.02;
    /** Defaults of --containers and --days: the invented fleet of the demo. */
    static final int CONTAINERS = 24;
    static final int DAYS = 3;
    /** Default of plan-training's --train-steps. */
    static final int[] PLANNED_TRAIN_STEPS = {25, 50, 100, 200};
    /** Default of --seconds. */
    static final double PLANNED_SECONDS = 20.0;

    /** The file arguments, in order. */
    final List<Path> files = new ArrayList<>();
    List<String> binary = List.of();
    /** --categorical: columns of FILE.csv holding labels; empty when not given. */
    List<String> categorical = List.of();
    /** --integer: columns of FILE.csv holding whole numbers (counts, codes); empty when not given. */
    List<String> integer = List.of();
    String missing = "";
    Path out = Path.of(OUT);
    int trainSteps = Defaults.STEPS;
    int[] trainStepsList = PLANNED_TRAIN_STEPS.clone();
    /** Empty: the planner's default step counts. */
    int[] sampleSteps = new int[0];
    double tolerance = TOLERANCE;
    /** 0: the library's default. */
    int epochs;
    double seconds = PLANNED_SECONDS;
    boolean secondsGiven;
    /** 0: a wall-clock budget of {@link #seconds} instead. */
    int updates;
    int[] hidden = Defaults.HIDDEN.stream().mapToInt(Integer::intValue).toArray();
    long seed = Defaults.SEED;
    int holdout = HOLDOUT;
    int containers = CONTAINERS;
    int days = DAYS;
    /** --noise: column name to sensor noise sd (original units), in the order given; empty when not given. */
    java.util.Map<String, Double> noise = java.util.Map.of();
    /** --compare: the batch to compare with the table for drift, or null. */
    Path compare;
    boolean progress = true;
    boolean help;

    /** @return the only file argument, or null when none was given (commands that take at most one) */
    Path file() {
        return files.isEmpty() ? null : files.get(0);
    }
}
