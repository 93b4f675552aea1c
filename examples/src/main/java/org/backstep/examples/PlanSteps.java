package org.backstep.examples;

import org.backstep.DiffusionModel;
import org.backstep.report.StepPlan;
import org.backstep.table.ColumnKind;
import org.backstep.table.CsvTables;
import org.backstep.table.Table;
import org.backstep.table.TableFormatException;

import java.io.IOException;
import java.io.PrintStream;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;

/**
 * The step-count planner as one command: loads a model file and held-out rows, evaluates strided
 * sampling chains of several step counts K, prints the table and recommendation, and writes
 * step-plan.csv and step-plan.png (the names the demo gives the same files).
 */
public final class PlanSteps {

    static final Command COMMAND = new Command("plan-steps", List.of("MODEL.backstep", "HELD_OUT.csv"), 2,
            "Evaluates sampling step counts K of a saved model on held-out rows (rows kept back from training;"
                    + " their complete rows are used): the bound per dimension, sample quality and the cost of"
                    + " 1,000 samples at each K; recommends the smallest K whose bound is within the tolerance of"
                    + " the best. Writes step-plan.csv and step-plan.png.",
            List.of(Option.SAMPLE_STEPS, Option.TOLERANCE, Option.SEED, Option.MISSING, Option.OUT),
            PlanSteps::execute);

    private PlanSteps() {
    }

    /**
     * @param args see {@code examples/plan-steps --help}
     */
    public static void main(String[] args) {
        COMMAND.main(args);
    }

    /**
     * Runs the command; returns the exit code instead of exiting.
     *
     * @param args the arguments
     * @param out where the table goes
     * @param err where errors go
     * @return 0 on success, 2 for bad arguments, 1 for a failure
     */
    static int run(String[] args, PrintStream out, PrintStream err) {
        return COMMAND.run(args, out, err);
    }

    private static void execute(Settings s, PrintStream out) throws IOException, TableFormatException {
        DiffusionModel model = DiffusionModel.load(s.files.get(0));
        List<String> binary = new ArrayList<>();
        List<String> continuous = new ArrayList<>();
        List<String> categorical = new ArrayList<>();
        List<String> integer = new ArrayList<>();
        for (int j = 0; j < model.transform().names().size(); j++) {
            ColumnKind kind = model.transform().kinds().get(j);
            (kind == ColumnKind.BINARY ? binary : kind == ColumnKind.CATEGORICAL ? categorical : kind == ColumnKind.INTEGER ? integer
                    : continuous).add(model.transform().names().get(j));
        }
        Table file = CsvTables.reader().missingToken(s.missing).binary(binary.toArray(String[]::new))
                .categorical(categorical.toArray(String[]::new)).integer(integer.toArray(String[]::new))
                .continuous(continuous.toArray(String[]::new)).read(s.files.get(1));
        Table held = file.completeRows();
        out.printf(Locale.ROOT, "Held-out rows %s: %d rows, %d of them complete (used)%n", s.files.get(1), file.rows(), held.rows());
        StepPlan plan = model.planSteps(held, s.tolerance, s.seed, s.sampleSteps);
        out.print(plan);
        PlanFiles.writeStepPlan(plan, s.out, out);
    }
}
