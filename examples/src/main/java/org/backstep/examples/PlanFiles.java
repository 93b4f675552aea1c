package org.backstep.examples;

import org.backstep.io.AtomicFiles;
import org.backstep.plot.Charts;
import org.backstep.report.StepPlan;
import org.backstep.report.TrainingPlan;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;

/**
 * The planners' files, named once for every command: the sampling step-count planner writes
 * {@value #STEP_PLAN_CSV} and {@value #STEP_PLAN_PNG} (demo and plan-steps), the training planner
 * {@value #TRAINING_PLAN_CSV} and {@value #TRAINING_PLAN_PNG} (plan-training). Each file is written
 * atomically.
 */
final class PlanFiles {

    static final String STEP_PLAN_CSV = "step-plan.csv";
    static final String STEP_PLAN_PNG = "step-plan.png";
    static final String TRAINING_PLAN_CSV = "training-plan.csv";
    static final String TRAINING_PLAN_PNG = "training-plan.png";

    private PlanFiles() {
    }

    /** Writes the step plan's table and chart into {@code dir} (created if missing) and says so on {@code out}. */
    static void writeStepPlan(StepPlan plan, Path dir, PrintStream out) throws IOException {
        Files.createDirectories(dir);
        Path csv = dir.resolve(STEP_PLAN_CSV);
        Path png = dir.resolve(STEP_PLAN_PNG);
        AtomicFiles.write(csv, plan.toCsv().getBytes(StandardCharsets.UTF_8));
        Charts.save(Charts.stepPlan(plan), png);
        out.println("Wrote " + csv + " and " + png);
    }

    /** Writes the training plan's table and, unless every model's samples diverged, its chart. */
    static void writeTrainingPlan(TrainingPlan plan, Path dir, PrintStream out) throws IOException {
        Files.createDirectories(dir);
        Path csv = dir.resolve(TRAINING_PLAN_CSV);
        Path png = dir.resolve(TRAINING_PLAN_PNG);
        AtomicFiles.write(csv, plan.toCsv().getBytes(StandardCharsets.UTF_8));
        if (plan.rows().stream().allMatch(TrainingPlan.Row::samplesDiverged)) {
            out.println("Wrote " + csv + " (no chart: every model's sampling chain diverged)");
        } else {
            Charts.save(Charts.trainingPlan(plan), png);
            out.println("Wrote " + csv + " and " + png);
        }
    }
}
