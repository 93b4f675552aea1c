package org.backstep;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.io.AtomicFiles;
import org.backstep.io.JsonFields;
import org.backstep.io.ModelFileException;
import org.backstep.option.BoundOptions;
import org.backstep.option.DenoisingOptions;
import org.backstep.option.FitOptions;
import org.backstep.option.ImputationOptions;
import org.backstep.option.ReverseVariance;
import org.backstep.option.SamplingPlan;
import org.backstep.option.ScreeningOptions;
import org.backstep.option.TrainingBudget;
import org.backstep.option.TrainingLoss;
import org.backstep.report.AnomalyScreen;
import org.backstep.report.BoundReport;
import org.backstep.report.CheckedSample;
import org.backstep.report.Denoising;
import org.backstep.report.Imputation;
import org.backstep.report.SampleCheck;
import org.backstep.report.StepPlan;
import org.backstep.report.TrainingPlan;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.ColumnTransform;
import org.backstep.table.Table;
import org.backstep.table.TableTransform;
import org.backstep.training.EpochRecord;
import org.backstep.training.Provenance;
import org.backstep.training.TrainingListener;
import org.backstep.training.TrainingProgress;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.knowm.xchart.XYChart;

import java.io.IOException;
import java.lang.reflect.Constructor;
import java.lang.reflect.Executable;
import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Method;
import java.lang.reflect.Modifier;
import java.lang.reflect.Parameter;
import java.lang.reflect.ParameterizedType;
import java.lang.reflect.Type;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalDouble;
import java.util.Set;
import java.util.function.BooleanSupplier;
import java.util.function.Supplier;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Every public method and constructor of the front door and of the option, report, training,
 * io, quality, posterior and plot packages, called with null for each of its reference parameters
 * in turn (the others given valid values): each must refuse with an
 * {@link IllegalArgumentException} or a {@link NullPointerException} whose message names the
 * parameter and says it is null, never a raw exception from inside (a JVM message such as
 * {@code Cannot invoke ... because "x" is null} does not count). The classes are found by
 * listing the compiled classes of those packages, so a new public method is checked the day it
 * is written. One allowance: {@link JsonFields} reads a model file's JSON, where a null node is
 * a field the file lacks, so a null {@code value} or {@code parent} there is refused as the file's
 * fault, a {@link ModelFileException} naming the field. Common practice, no source. The names
 * come from the class files, which the build compiles with {@code -parameters}.
 */
class NullArgumentsTest {

    private static final List<String> PACKAGES = List.of("org.backstep", "org.backstep.option", "org.backstep.report",
            "org.backstep.training", "org.backstep.io", "org.backstep.quality", "org.backstep.posterior",
            "org.backstep.plot");
    /** Calls the sweep must make at least, so that a broken class listing cannot pass. */
    private static final int MIN_CALLS = 140;

    @TempDir
    Path dir;

    private final Map<Class<?>, Supplier<Object>> samples = new HashMap<>();

    private void samples() throws IOException {
        List<String> names = List.of("supply_c", "return_c", "door_open");
        List<ColumnKind> kinds = List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS, ColumnKind.BINARY);
        Table table = Table.of(names, kinds, new double[][] {{4, 5, 0}, {3, 4, 1}, {5, 6, 0}});
        TableTransform transform = TableTransform.of(names, kinds, List.of(ColumnTransform.standardize(4, 1.5),
                ColumnTransform.standardize(5, 1.5), ColumnTransform.identity()));
        FitOptions options = Backstep.builder().coordinates(org.backstep.option.Coordinates.STANDARDIZED).baseline(org.backstep.option.Baseline.NONE).steps(20).hidden(4).variance(ReverseVariance.FIXED_POSTERIOR)
                .loss(TrainingLoss.SIMPLE).threads(1).options();
        DiffusionModel model = DiffusionModel.withEstimator(options, transform, new ConstantEstimator(3, 3, 0f));
        EpochRecord epoch = new EpochRecord(1, 0.5, OptionalDouble.of(1.0), 0.1);
        Provenance provenance = new Provenance("0", "17", "os", "arch", "2020-01-01T00:00:00Z", 1.0, 3, 3, 0, 0, 0, 0, "00",
                List.of(epoch), List.of("note"));
        BoundReport bound = model.bound(table, 1);
        StepPlan.Row stepRow = new StepPlan.Row(10, 1.0, 0.1, 0.5, 0.1, 10.0);
        TrainingPlan.Row trainingRow = new TrainingPlan.Row(10, 10, 1, 1, 1.0, 0.1, 0.1, 0.5, 0.1, 10.0, false);
        Path file = dir.resolve("file.out");
        samples.put(Table.class, () -> table);
        samples.put(TableTransform.class, () -> transform);
        samples.put(FitOptions.class, () -> options);
        samples.put(DiffusionModel.class, () -> model);
        samples.put(Backstep.Builder.class, Backstep::builder);
        samples.put(NoiseSchedule.class, () -> NoiseSchedule.linear(20));
        samples.put(Path.class, () -> file);
        samples.put(String.class, () -> "supply_c");
        samples.put(double[].class, () -> new double[] {0.1, 0.1, 0.0});
        samples.put(double[][].class, () -> new double[][] {{0.1, 0.2}, {0.3, 0.1}, {0.2, 0.2}});
        samples.put(int[].class, () -> new int[] {2});
        samples.put(long[].class, () -> new long[] {2});
        samples.put(byte[].class, () -> new byte[] {2});
        samples.put(String[].class, () -> new String[] {"supply_c"});
        samples.put(Duration.class, () -> Duration.ofSeconds(1));
        samples.put(EpochRecord.class, () -> epoch);
        samples.put(Provenance.class, () -> provenance);
        samples.put(OptionalDouble.class, OptionalDouble::empty);
        samples.put(BoundOptions.class, BoundOptions::exact);
        samples.put(org.backstep.option.FlowOptions.class, Defaults::flow);
        samples.put(ImputationOptions.class, Defaults::imputation);
        samples.put(DenoisingOptions.class, () -> Defaults.denoising(0.1, 0.1, 0.0));
        samples.put(ScreeningOptions.class, Defaults::screening);
        samples.put(SamplingPlan.class, SamplingPlan::ancestral);
        samples.put(TrainingBudget.class, () -> TrainingBudget.updates(10));
        samples.put(TrainingListener.class, () -> TrainingListener.NONE);
        samples.put(BooleanSupplier.class, () -> (BooleanSupplier) () -> false);
        samples.put(TrainingProgress.class, () -> new TrainingProgress(1, 1, 1, 1, 0.5, OptionalDouble.empty(), 1.0, 0.0));
        samples.put(JsonNode.class, () -> org.backstep.training.ProvenanceJson.write(provenance));
        samples.put(ObjectNode.class, () -> JsonNodeFactory.instance.objectNode());
        samples.put(BoundReport.class, () -> bound);
        samples.put(BoundReport.RecordNats.class, () -> new BoundReport.RecordNats(new double[3], new double[3], new double[3]));
        samples.put(boolean[].class, () -> new boolean[] {true, false, false});
        samples.put(SampleCheck.class, () -> new SampleCheck(3, 0, 0.0, 10.0, "none"));
        samples.put(CheckedSample.class, () -> new CheckedSample(table, new SampleCheck(3, 0, 0.0, 10.0, "none")));
        samples.put(StepPlan.Row.class, () -> stepRow);
        samples.put(StepPlan.class, () -> new StepPlan(List.of(stepRow), 0.0, 10, "why"));
        samples.put(TrainingPlan.Row.class, () -> trainingRow);
        samples.put(TrainingPlan.class, () -> new TrainingPlan(TrainingBudget.updates(10), 0.0, List.of(trainingRow)));
        samples.put(AnomalyScreen.class, () -> new AnomalyScreen(org.backstep.option.ThresholdRule.quantile(0.9), 1.0,
                new double[] {0.5, 2.0, 0.1}, new double[] {0.5, 2.0, 0.1}, new int[] {1}, List.of(),
                org.backstep.report.Surprisal.none(List.of("x"))));
        samples.put(Imputation.class, () -> new Imputation(List.of(table), table, table, table, 0.9));
        samples.put(Denoising.class, () -> new Denoising(table, table, 1, 1));
        samples.put(AtomicFiles.Content.class, () -> (AtomicFiles.Content) out -> out.write(1));
        samples.put(XYChart.class, () -> new XYChart(10, 10));
        samples.put(List.class, List::of);
        samples.put(org.backstep.option.ThresholdRule.class, () -> org.backstep.option.ThresholdRule.quantile(0.9));
        samples.put(org.backstep.option.MissingCells.class, org.backstep.option.MissingCells::refuse);
        samples.put(org.backstep.option.SurprisalOptions.class, Defaults::surprisal);
        samples.put(org.backstep.option.DriftOptions.class, Defaults::drift);
        samples.put(org.backstep.report.Surprisal.class, () -> org.backstep.report.Surprisal.none(model.transform().names()));
        samples.put(org.backstep.report.DriftReport.class, () -> model.drift(table, table, Defaults.drift(), 1));
        samples.put(org.backstep.report.DriftTest.class, () -> model.drift(table, table, Defaults.drift(), 1).score());
        samples.put(org.backstep.posterior.CategoricalDiffusion.class,
                () -> org.backstep.posterior.CategoricalDiffusion.of(NoiseSchedule.binomial(20), 3));
        samples.put(org.backstep.posterior.DiscretizedGaussian.class,
                () -> org.backstep.posterior.DiscretizedGaussian.unbounded(0.0, 1.0));
        samples.put(org.backstep.posterior.GaussianDiffusion.class,
                () -> org.backstep.posterior.GaussianDiffusion.of(NoiseSchedule.linear(20)));
        samples.put(org.backstep.posterior.BinomialDiffusion.class,
                () -> org.backstep.posterior.BinomialDiffusion.of(NoiseSchedule.binomial(20)));
    }

    private Object sample(Type type) {
        Class<?> raw = type instanceof ParameterizedType p ? (Class<?>) p.getRawType() : (Class<?>) type;
        if (raw == boolean.class) {
            return Boolean.FALSE;
        } else if (raw == double.class) {
            return Double.valueOf(0.5);
        } else if (raw == long.class) {
            return Long.valueOf(1);
        } else if (raw == int.class) {
            return Integer.valueOf(2);      // valid as an even embedding size, a count, a step, a thread count
        } else if (raw.isPrimitive()) {
            return null;
        }
        if (raw == Class.class) {
            return ColumnKind.class;
        }
        if (raw.isEnum()) {
            return raw.getEnumConstants()[0];
        }
        Supplier<Object> s = samples.get(raw);
        if (s != null) {
            return s.get();
        }
        if ((raw == List.class || raw == Set.class) && type instanceof ParameterizedType p) {
            Object element = sample(p.getActualTypeArguments()[0]);
            return element == null ? null : raw == List.class ? List.of(element) : Set.of(element);
        }
        if (raw == Map.class && type instanceof ParameterizedType p && p.getActualTypeArguments()[0] == String.class) {
            Object value = sample(p.getActualTypeArguments()[1]);
            return value == null ? null : Map.of("a", value);
        }
        if (raw == org.knowm.xchart.internal.chartpart.Chart.class) {
            return new XYChart(10, 10);
        }
        return null;
    }

    @Test
    void everyReferenceParameterRefusesNullByName() throws Exception {
        samples();
        List<String> offenders = new ArrayList<>();
        List<String> unreached = new ArrayList<>();
        int calls = 0;
        for (Class<?> c : publicClasses()) {
            List<Executable> members = new ArrayList<>();
            for (Constructor<?> k : c.getConstructors()) {
                members.add(k);
            }
            for (Method m : c.getDeclaredMethods()) {
                if (Modifier.isPublic(m.getModifiers()) && !m.isSynthetic() && !m.isBridge()
                        && !(m.getName().equals("equals") && m.getParameterCount() == 1)) {
                    members.add(m);
                }
            }
            for (Executable e : members) {
                Parameter[] ps = e.getParameters();
                Type[] types = e.getGenericParameterTypes();
                if (types.length != ps.length) {
                    continue;       // an inner class's implicit outer parameter; none in these packages
                }
                for (int i = 0; i < ps.length; i++) {
                    if (ps[i].getType().isPrimitive()) {
                        continue;
                    }
                    assertTrue(ps[i].isNamePresent(), "compile with -parameters: " + e);
                    Object[] args = new Object[ps.length];
                    boolean complete = true;
                    for (int j = 0; j < ps.length; j++) {
                        args[j] = j == i ? null : sample(types[j]);
                        complete &= j == i || args[j] != null;
                    }
                    Object receiver = e instanceof Method m && !Modifier.isStatic(m.getModifiers()) ? sample(c) : null;
                    if (!complete || (e instanceof Method m && !Modifier.isStatic(m.getModifiers()) && receiver == null)) {
                        unreached.add(e + " (" + ps[i].getName() + ")");
                        continue;
                    }
                    calls++;
                    String name = ps[i].getName();
                    Throwable thrown = null;
                    try {
                        if (e instanceof Method m) {
                            m.invoke(receiver, args);
                        } else {
                            ((Constructor<?>) e).newInstance(args);
                        }
                    } catch (InvocationTargetException x) {
                        thrown = x.getCause();
                    } catch (IllegalArgumentException x) {
                        unreached.add(e + " (" + name + "): the sweep's arguments do not fit: " + x.getMessage());
                        continue;
                    }
                    String message = thrown == null ? null : thrown.getMessage();
                    boolean named = message != null && message.contains(name) && message.contains("null")
                            && !message.startsWith("Cannot ");
                    boolean kind = thrown instanceof IllegalArgumentException || thrown instanceof NullPointerException;
                    boolean missingNode = c == JsonFields.class && (name.equals("value") || name.equals("parent"))
                            && thrown instanceof ModelFileException;
                    // MissingCells(false, null) is the refusing mode: null imputation is its documented value
                    boolean refusingMode = c == org.backstep.option.MissingCells.class && e instanceof Constructor<?>
                            && name.equals("imputation");
                    if (!(kind && named) && !missingNode && !refusingMode) {
                        offenders.add(c.getSimpleName() + "." + (e instanceof Method ? e.getName() : "<init>") + "("
                                + name + " = null): " + (thrown == null ? "accepted" : thrown.toString()));
                    }
                }
            }
        }
        assertTrue(calls >= MIN_CALLS, "only " + calls + " calls made; unreached: " + unreached);
        assertEquals(List.of(), unreached, "parameters the sweep has no sample for");
        assertEquals(List.of(), offenders, offenders.size() + " of " + calls + " calls");
    }

    /** The public top-level and nested classes of the packages, from the compiled classes. */
    private static List<Class<?>> publicClasses() throws IOException, ClassNotFoundException {
        Path root = Path.of(DiffusionModel.class.getProtectionDomain().getCodeSource().getLocation().getPath());
        List<Class<?>> out = new ArrayList<>();
        for (String pkg : PACKAGES) {
            Path folder = root.resolve(pkg.replace('.', '/'));
            try (Stream<Path> files = Files.list(folder)) {
                for (Path f : files.filter(p -> p.toString().endsWith(".class")).sorted().toList()) {
                    String simple = f.getFileName().toString().replace(".class", "");
                    if (simple.equals("package-info") || simple.matches(".*\\$[0-9].*")) {
                        continue;
                    }
                    Class<?> c = Class.forName(pkg + "." + simple);
                    if (Modifier.isPublic(c.getModifiers()) && !c.isInterface() && !c.isEnum()
                            && !Throwable.class.isAssignableFrom(c)) {
                        out.add(c);
                    }
                }
            }
        }
        return out;
    }
}
