package org.backstep;

import org.backstep.io.AtomicFiles;
import org.backstep.option.BoundOptions;
import org.backstep.option.Conditioning;
import org.backstep.option.ImputationOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplingPlan;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.StepInput;
import org.backstep.option.TrainingBudget;
import org.backstep.option.TrainingLoss;
import org.backstep.report.CheckedSample;
import org.backstep.report.SampleCheck;
import org.backstep.report.StepPlan;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.ProvenanceJson;
import org.junit.jupiter.api.DynamicTest;
import org.junit.jupiter.api.TestFactory;
import org.junit.jupiter.api.function.Executable;

import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * A catalogue of bad arguments to the public API (the front door and the option, report,
 * training and io packages), each with the exception and the message it must give: the
 * parameter named, its value and what was expected, before any work or allocation; never a raw
 * array, arithmetic or null-pointer exception from inside. Common practice, no source (the rule
 * of DEVELOPERS.md, "Failures are specific").
 */
class BadArgumentsTest {

    /** One bad call and the message it must give (exactly, or as a prefix when it ends in "..."). */
    private record Case(String call, Executable run, String message) {
    }

    private static final List<String> NAMES = List.of("supply_c", "return_c", "door_open");
    private static final List<ColumnKind> KINDS = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY);

    /** A model over a constant estimator (no training): T = 20, two continuous columns and one binary. */
    private static DiffusionModel model() {
        TableTransform transform = TableTransform.of(NAMES, KINDS, List.of(ColumnTransform.standardize(4, 1.5),
                ColumnTransform.standardize(5, 1.5), ColumnTransform.identity()));
        return DiffusionModel.withEstimator(Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).steps(20).variance(ReverseVariance.FIXED_POSTERIOR)
                .loss(TrainingLoss.SIMPLE).threads(1).options(), transform, new ConstantEstimator(3, 3, 0f));
    }

    private static Table records(double[]... rows) {
        return Table.of(NAMES, KINDS, rows);
    }

    @TestFactory
    Stream<DynamicTest> everyBadArgumentIsRefusedWithItsMessage() {
        DiffusionModel m = model();
        Table good = records(new double[] {4, 5, 0}, new double[] {3, 4, 1});
        List<Case> cases = new ArrayList<>();
        // the builder: limits shared with the loader (Limits)
        cases.add(new Case("steps(0)", () -> Backstep.builder().steps(0).options(),
                "steps is 0; expected a whole number from 1 to 1000000"));
        cases.add(new Case("steps(1_000_001)", () -> Backstep.builder().steps(1_000_001).options(),
                "steps is 1000001; expected a whole number from 1 to 1000000"));
        cases.add(new Case("steps(Integer.MAX_VALUE)", () -> Backstep.builder().steps(Integer.MAX_VALUE).options(),
                "steps is 2147483647; expected a whole number from 1 to 1000000"));
        cases.add(new Case("hidden((int[]) null)", () -> Backstep.builder().hidden((int[]) null).options(),
                "widths is null; expected a value"));
        cases.add(new Case("hidden()", () -> Backstep.builder().hidden().options(),
                "number of hidden layers is 0; expected a whole number from 1 to 64"));
        cases.add(new Case("hidden(20000, 20000)", () -> Backstep.builder().hidden(20000, 20000).options(),
                "hidden[0] is 20000; expected a whole number from 1 to 16384"));
        cases.add(new Case("timeEmbedding(2147483646, ...)", () -> Backstep.builder()
                .timeEmbedding(2147483646, StepInput.INPUT).options(),
                "embeddingSize is 2147483646; expected a whole number from 2 to 1024"));
        cases.add(new Case("timeEmbedding(7, ...)", () -> Backstep.builder().timeEmbedding(7, StepInput.INPUT).options(),
                "embeddingSize is 7; expected an even number"));
        cases.add(new Case("timeEmbedding(1024, ...) at T = 1,000,000", () -> Backstep.builder().steps(1_000_000)
                .timeEmbedding(1024, StepInput.INPUT).options(),
                "steps x embeddingSize is 1000000 x 1024 = 1024000000 values of the step embedding table; the limit is "
                        + "268435456 (Limits.MAX_PARAMETERS)"));
        cases.add(new Case("timeEmbedding(8, null)", () -> Backstep.builder().timeEmbedding(8, null).options(),
                "where is null; expected a value"));
        cases.add(new Case("threads(0)", () -> Backstep.builder().threads(0).options(),
                "threads is 0; expected a whole number from 1 to 1024"));
        cases.add(new Case("batchSize(0)", () -> Backstep.builder().batchSize(0).options(),
                "batchSize is 0; expected at least 1"));
        cases.add(new Case("learningRate(NaN)", () -> Backstep.builder().learningRate(Double.NaN).options(),
                "learningRate is NaN; expected a finite number above 0"));
        cases.add(new Case("loss(SIMPLE) with learned variances", () -> Backstep.builder().loss(TrainingLoss.SIMPLE).options(),
                "loss is SIMPLE but variance is LEARNED; the simple loss does not train variances (choose loss HYBRID or "
                        + "BOUND, or a fixed variance)"));
        cases.add(new Case("adam(1.0, ...)", () -> Backstep.builder().adam(1.0, 0.999, 1e-8).options(),
                "adam beta1 is 1.0; expected a number in [0, 1)"));
        cases.add(new Case("logColumns((String) null)", () -> Backstep.builder().logColumns((String) null),
                "names[0] is null; expected a value"));
        cases.add(new Case("logColumns((String[]) null)", () -> Backstep.builder().logColumns((String[]) null),
                "names is null; expected a value"));
        cases.add(new Case("checkpointDraws(Integer.MAX_VALUE)", () -> Backstep.builder().checkpointDraws(Integer.MAX_VALUE)
                .options(), "checkpointDraws is 2147483647; expected a whole number from 1 to 1000000"));
        cases.add(new Case("continuousSchedule(ofBetas(1e-320, ...))", () -> Backstep.builder()
                .continuousSchedule(NoiseSchedule.ofBetas(1e-320, 0.1)).options(),
                "continuousSchedule beta at step 1 is 1.0E-320; expected at least 1.0E-12 (Limits.MIN_BETA)"));
        cases.add(new Case("continuousSchedule(binomial(10))", () -> Backstep.builder()
                .continuousSchedule(NoiseSchedule.binomial(10)).options(),
                "continuousSchedule's last beta is 1; a Gaussian chain needs every beta below 1 (a beta of 1 is for the "
                        + "binomial schedule of binary columns)"));
        cases.add(new Case("continuousSchedule(linear(10).strided(5))", () -> Backstep.builder()
                .continuousSchedule(NoiseSchedule.linear(10).strided(5)).options(),
                "continuousSchedule is strided; train on a full schedule and stride it for sampling"));
        cases.add(new Case("listener(null)", () -> Backstep.builder().listener(null).options(),
                "listener is null; expected a value"));
        cases.add(new Case("fit(null)", () -> Backstep.builder().fit(null), "training is null; expected a value"));
        cases.add(new Case("planTraining(..., stepCounts 1)", () -> Backstep.builder().planTraining(good, good,
                TrainingBudget.updates(10), 0.0, 1), "stepCounts[0] is 1; expected at least 2"));
        // the model's jobs
        cases.add(new Case("sample(0, seed)", () -> m.sample(0, 1), "count is 0; expected at least 1"));
        cases.add(new Case("sample(Integer.MAX_VALUE, seed)", () -> m.sample(Integer.MAX_VALUE, 1),
                "count x columns of the sample is 2147483647 x 3 cells; the limit is 268435456 (Limits.MAX_CELLS)"));
        cases.add(new Case("sample(600_000_000, seed)", () -> m.sample(600_000_000, 1),
                "count x columns of the sample is 600000000 x 3 cells; the limit is 268435456 (Limits.MAX_CELLS)"));
        cases.add(new Case("sample(10, null, seed)", () -> m.sample(10, null, 1), "plan is null; expected a value"));
        cases.add(new Case("sample(10, ancestral(21), seed)", () -> m.sample(10, SamplingPlan.ancestral(21), 1),
                "steps is 21; expected a whole number from 0 to 20"));
        cases.add(new Case("sampleChecked(-1, ...)", () -> m.sampleChecked(-1, SamplingPlan.ancestral(), 1),
                "count is -1; expected at least 1"));
        cases.add(new Case("bound(null, seed)", () -> m.bound(null, 1), "records is null; expected a value"));
        cases.add(new Case("bound(records, null, seed)", () -> m.bound(good, null, 1), "how is null; expected a value"));
        cases.add(new Case("bound(records with a missing cell, ...)", () -> m.bound(records(new double[] {4, Double.NaN, 0}), 1),
                "records: row 0, column 'return_c' is missing; this needs complete records (impute them first)"));
        cases.add(new Case("bound(records of other columns, ...)", () -> m.bound(Table.of(List.of("x"),
                List.of(ColumnKind.CONTINUOUS), new double[][] {{1}}), 1),
                "records has columns [x] [CONTINUOUS]; expected the training columns [supply_c, return_c, door_open] "
                        + "[CONTINUOUS, CONTINUOUS, BINARY]"));
        cases.add(new Case("bound(records with 0 rows, ...)", () -> m.bound(records(), 1), "records has 0 rows; expected at least 1"));
        cases.add(new Case("bound(records, exactStrided(21), ...)", () -> m.bound(good, BoundOptions.exactStrided(21), 1),
                "steps is 21; expected a whole number from 0 to 20"));
        cases.add(new Case("bound(a record past the float range in model space, ...)",
                () -> m.bound(records(new double[] {1e300, 5, 0}), 1),
                "records: row 0, column 'supply_c' is 1.0E300: ..."));
        cases.add(new Case("flowLikelihood(records of a model with a binary column)", () -> m.flowLikelihood(good),
                "records: the model diffuses 1 binary, integer or categorical column(s) [door_open]; the flow likelihood"
                        + " covers continuous columns only (the ODE needs a density): use bound(records, seed) for this model"));
        cases.add(new Case("flowLikelihood(records, null)", () -> m.flowLikelihood(good, null), "how is null; expected a value"));
        cases.add(new Case("flowLikelihood(records with a missing cell)", () -> m.flowLikelihood(records(new double[] {4, Double.NaN, 0})),
                "records: row 0, column 'return_c' is missing; this needs complete records (impute them first)"));
        cases.add(new Case("FlowOptions.of(0, 1e-5)", () -> org.backstep.option.FlowOptions.of(0, 1e-5),
                "relativeTolerance is 0.0; expected a number in (0, 0.1]"));
        cases.add(new Case("FlowOptions.of(1e-5, 1)", () -> org.backstep.option.FlowOptions.of(1e-5, 1),
                "absoluteTolerance is 1.0; expected a number in (0, 0.1]"));
        cases.add(new Case("denoise(null, how, seed)", () -> m.denoise(null, Defaults.denoising(0.1, 0.1, 0), 1),
                "readings is null; expected a value"));
        cases.add(new Case("denoise(readings, null, seed)", () -> m.denoise(good, null, 1), "how is null; expected a value"));
        cases.add(new Case("impute(null, seed)", () -> m.impute(null, 1), "records is null; expected a value"));
        cases.add(new Case("impute(3 rows, 1,000,000 draws x 100 rows)", () -> m.impute(records(new double[100][3]),
                Defaults.imputation().withDraws(1_000_000), 1),
                "draws x rows x columns of the imputation is 1000000 x 100 x 3 cells; the limit is 268435456 (Limits.MAX_CELLS)"));
        cases.add(new Case("planSteps(heldOut, -1, ...)", () -> m.planSteps(good, -1, 1),
                "tolerance is -1.0; expected a finite number of at least 0"));
        cases.add(new Case("planSteps(null, ...)", () -> m.planSteps(null, 0.01, 1), "heldOut is null; expected a value"));
        cases.add(new Case("planSteps(..., (int[]) null)", () -> m.planSteps(good, 0.01, 1, (int[]) null),
                "stepCounts is null; expected a value"));
        cases.add(new Case("planSteps(..., 0)", () -> m.planSteps(good, 0.01, 1, 0), "step count 0 is outside 1..20"));
        cases.add(new Case("save(null)", () -> m.save(null), "file is null; expected a value"));
        cases.add(new Case("load(null)", () -> DiffusionModel.load(null), "file is null; expected a value"));
        // option values
        cases.add(new Case("BoundOptions.sampled(0)", () -> BoundOptions.sampled(0),
                "draws is 0; expected a whole number from 1 to 1000000"));
        cases.add(new Case("BoundOptions.sampled(Integer.MAX_VALUE)", () -> BoundOptions.sampled(Integer.MAX_VALUE),
                "draws is 2147483647; expected a whole number from 1 to 1000000"));
        cases.add(new Case("ImputationOptions level 1.5", () -> new ImputationOptions(20, 1.5, 100, 1, Conditioning.REPLACEMENT),
                "level is 1.5; expected a number in (0.0, 1.0)"));
        cases.add(new Case("Defaults.denoising((double[]) null)", () -> Defaults.denoising((double[]) null),
                "noiseSd is null; expected a value"));
        cases.add(new Case("Defaults.screening().withBound(null)", () -> Defaults.screening().withBound(null), "bound is null; expected a value"));
        cases.add(new Case("SamplingPlan.implicit(10, 2.0)", () -> SamplingPlan.implicit(10, 2.0),
                "eta is 2.0; expected a number in [0.0, 1.0]"));
        cases.add(new Case("TrainingBudget.wallClock(null)", () -> TrainingBudget.wallClock(null), "wallClock is null; expected a value"));
        cases.add(new Case("TrainingBudget.updates(0)", () -> TrainingBudget.updates(0), "updates is 0; expected at least 1"));
        // reports, training, io
        cases.add(new Case("new CheckedSample(null, check)", () -> new CheckedSample(null, new SampleCheck(0, 0, 0, 10, "none")),
                "table is null; expected a value"));
        cases.add(new Case("new SampleCheck(10, 11, ...)", () -> new SampleCheck(10, 11, 0, 10, "none"),
                "rowsBeyond is 11; expected a whole number from 0 to 10"));
        cases.add(new Case("new StepPlan(null, ...)", () -> new StepPlan(null, 0.0, 1, ""), "rows is null; expected a value"));
        cases.add(new Case("ProvenanceJson.read(null)", () -> ProvenanceJson.read(null), "json is null; expected a value"));
        cases.add(new Case("AtomicFiles.write(path, (byte[]) null)", () -> AtomicFiles.write(Path.of("x"), (byte[]) null),
                "content is null; expected a value"));
        assertTrue(cases.size() >= 30, "the catalogue holds " + cases.size() + " cases; the issue asks for at least 30");
        return cases.stream().map(c -> DynamicTest.dynamicTest(c.call(), () -> {
            IllegalArgumentException e = assertThrows(IllegalArgumentException.class, c.run(), c.call());
            if (c.message().endsWith("...")) {
                String prefix = c.message().substring(0, c.message().length() - 3);
                assertTrue(e.getMessage().startsWith(prefix), c.call() + " gave: " + e.getMessage());
            } else {
                assertEquals(c.message(), e.getMessage(), c.call());
            }
        }));
    }
}
