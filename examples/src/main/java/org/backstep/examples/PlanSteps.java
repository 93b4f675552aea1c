package org.backstep.examples;

import org.backstep.DiffusionModel;
import org.backstep.report.StepPlan;
import org.backstep.io.AtomicFiles;
import org.backstep.plot.Charts;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;

import java.io.IOException;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;

/**
 * The step-count planner as one command: loads a model file and held-out rows, evaluates strided
 * step counts, prints the table and recommendation, and writes plan.csv and plan.png.
 */
public final class PlanSteps {

    static final String USAGE = String.join("\n",
            "Usage: examples/plan-steps MODEL.backstep HELD_OUT.csv [options]",
            "",
            "Evaluates sampling step counts of a saved model on held-out rows (complete rows are used):",
            "held-out bound per dimension, sample quality and cost; recommends the smallest step count",
            "whose bound is within the tolerance of the best.",
            "",
            "Options:",
            "  --tolerance X      nats per dimension (default 0.02)",
            "  --steps K,K,...    step counts to try (default 10,25,50,100,250 and T, those below T)",
            "  --seed S           the seed (default 1)",
            "  --out DIR          where plan.csv and plan.png go (default: the current folder)",
            "  --help             this text");

    private PlanSteps() {
    }

    /**
     * @param args see {@link #USAGE}
     */
    public static void main(String[] args) {
        int code = run(args, System.out, System.err);
        if (code != 0) {
            System.exit(code);
        }
    }

    static int run(String[] args, PrintStream out, PrintStream err) {
        List<String> files = new ArrayList<>();
        double tolerance = 0.02;
        long seed = 1;
        int[] steps = new int[0];
        Path dir = Path.of(".");
        try {
            for (int i = 0; i < args.length; i++) {
                switch (args[i]) {
                    case "--help", "-h" -> {
                        out.println(USAGE);
                        return 0;
                    }
                    case "--tolerance" -> tolerance = Arguments.number(Arguments.value(args, ++i, "--tolerance"), "--tolerance");
                    case "--seed" -> seed = Arguments.seed(Arguments.value(args, ++i, "--seed"), "--seed");
                    case "--out" -> dir = Path.of(Arguments.value(args, ++i, "--out"));
                    case "--steps" -> steps = Arguments.list(Arguments.value(args, ++i, "--steps"), "--steps", 1);
                    default -> {
                        if (args[i].startsWith("-")) {
                            throw new IllegalArgumentException("unknown option " + args[i]);
                        }
                        files.add(args[i]);
                    }
                }
            }
            if (files.size() != 2) {
                throw new IllegalArgumentException("expected a model file and a CSV file, got " + files.size() + " file arguments");
            }
        } catch (IllegalArgumentException e) {
            err.println("plan-steps: " + e.getMessage());
            err.println("Run examples/plan-steps --help for the options.");
            return 2;
        }
        try {
            DiffusionModel model = DiffusionModel.load(Path.of(files.get(0)));
            List<String> binary = new ArrayList<>();
            List<String> continuous = new ArrayList<>();
            for (int j = 0; j < model.transform().names().size(); j++) {
                (model.transform().kinds().get(j) == org.backstep.table.ColumnKind.BINARY ? binary : continuous)
                        .add(model.transform().names().get(j));
            }
            Table held = CsvTables.reader().binary(binary.toArray(String[]::new))
                    .continuous(continuous.toArray(String[]::new)).read(Path.of(files.get(1))).completeRows();
            StepPlan plan = model.planSteps(held, tolerance, seed, steps);
            out.print(plan);
            Files.createDirectories(dir);
            AtomicFiles.write(dir.resolve("plan.csv"), plan.toCsv().getBytes(StandardCharsets.UTF_8));
            Charts.save(Charts.stepPlan(plan), dir.resolve("plan.png"));
            out.println("Wrote " + dir.resolve("plan.csv") + " and " + dir.resolve("plan.png"));
            return 0;
        } catch (TableFormatException | IOException | IllegalArgumentException e) {
            err.println("plan-steps: " + e.getMessage());
            return 1;
        }
    }
}
