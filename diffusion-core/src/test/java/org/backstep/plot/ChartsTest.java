package org.backstep.plot;

import org.backstep.report.BoundReport;
import org.backstep.BoundReports;
import org.backstep.training.EpochRecord;
import org.backstep.report.StepPlan;
import org.backstep.report.TrainingPlan;
import org.backstep.option.TrainingBudget;
import org.backstep.schedule.NoiseSchedule;
import org.backstep.table.ColumnKind;
import org.backstep.table.Table;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;
import org.knowm.xchart.XYChart;
import org.w3c.dom.Document;

import javax.imageio.ImageIO;
import javax.xml.parsers.DocumentBuilder;
import javax.xml.parsers.DocumentBuilderFactory;
import java.awt.image.BufferedImage;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.OptionalDouble;
import java.util.SplittableRandom;
import java.util.function.Supplier;
import java.util.stream.Stream;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNotNull;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

/**
 * Every chart of {@link Charts} saved through {@link Charts#save} as PNG and as SVG, each read back
 * by a general-purpose reader of its format (javax.imageio; the JDK's XML parser); and the atomic
 * save's refusal of a bad extension.
 */
class ChartsTest {

    /** PNG signature, the first 8 bytes of every PNG file (PNG specification, ISO/IEC 15948:2004, section 5.2). */
    private static final byte[] PNG_SIGNATURE = {(byte) 0x89, 'P', 'N', 'G', '\r', '\n', 0x1A, '\n'};
    /** The SVG namespace (W3C, Scalable Vector Graphics 1.1, section 1.2). */
    private static final String SVG_NAMESPACE = "http://www.w3.org/2000/svg";
    /** An SVG file that draws a whole chart is larger than this (common practice, no source: an empty SVG is ~200 bytes). */
    private static final int MIN_SVG_BYTES = 2_000;
    /** Sums of a few small doubles (common practice, no source). */
    private static final double ROUNDING = 1e-12;

    /** One named chart per public method of Charts. */
    static Stream<Object[]> charts() {
        Map<String, Supplier<XYChart>> c = new LinkedHashMap<>();
        c.put("schedules", () -> {
            Map<String, NoiseSchedule> s = new LinkedHashMap<>();
            s.put("linear", NoiseSchedule.linear(100));
            s.put("cosine", NoiseSchedule.cosine(100));
            return Charts.schedules(s);
        });
        c.put("boundBreakdown", () -> Charts.boundBreakdown(exactReport()));
        c.put("trainingHistory", () -> {
            List<EpochRecord> h = new ArrayList<>();
            for (int e = 1; e <= 20; e++) {
                OptionalDouble bound = e % 5 == 0 ? OptionalDouble.of(3.0 + 10.0 / e) : OptionalDouble.empty();
                h.add(new EpochRecord(e, 1.0 + 5.0 / e, bound, 0.1 * e));
            }
            return Charts.trainingHistory(h);
        });
        c.put("scoreHistogram", () -> {
            SplittableRandom rng = new SplittableRandom(3);
            double[] scores = new double[500];
            for (int i = 0; i < scores.length; i++) {
                scores[i] = 4.0 + rng.nextGaussian();
            }
            return Charts.scoreHistogram(scores, 6.3, 40);
        });
        c.put("pairPlot", () -> Charts.pairPlot(table(200, 5), table(200, 6), "supply_c", "return_c"));
        c.put("stepPlan", () -> Charts.stepPlan(new StepPlan(List.of(
                new StepPlan.Row(10, 1.40, 0.03, 0.01, 0.09, 12.0),
                new StepPlan.Row(50, 1.31, 0.01, 0.30, 0.05, 55.0),
                new StepPlan.Row(100, 1.30, 0.01, 0.40, 0.04, 110.0)), 0.02, 50, "50 steps: within 0.02 of the best")));
        c.put("trainingPlan", () -> Charts.trainingPlan(trainingPlan(false)));
        c.put("roc", () -> {
            Map<String, List<org.backstep.report.RocPoint>> curves = new LinkedHashMap<>();
            curves.put("model, area 0.80", List.of(new org.backstep.report.RocPoint(Double.POSITIVE_INFINITY, 0, 0),
                    new org.backstep.report.RocPoint(3.0, 0.1, 0.6), new org.backstep.report.RocPoint(1.0, 0.5, 0.9),
                    new org.backstep.report.RocPoint(Double.NEGATIVE_INFINITY, 1, 1)));
            curves.put("range check, area 0.50", List.of(new org.backstep.report.RocPoint(Double.POSITIVE_INFINITY, 0, 0),
                    new org.backstep.report.RocPoint(Double.NEGATIVE_INFINITY, 1, 1)));
            return Charts.roc(curves);
        });
        return c.entrySet().stream().map(e -> new Object[] {e.getKey(), e.getValue()});
    }

    @Test
    void everyPublicChartMethodIsCovered() {
        // common practice, no source: the parameterized test below must not silently miss a method
        long chartMethods = Arrays.stream(Charts.class.getDeclaredMethods())
                .filter(m -> java.lang.reflect.Modifier.isPublic(m.getModifiers()) && m.getReturnType() == XYChart.class)
                .count();
        assertEquals(chartMethods, charts().count());
    }

    @ParameterizedTest(name = "{0}")
    @MethodSource("charts")
    void writesPngAndSvg(String name, Supplier<XYChart> make, @TempDir Path dir) throws Exception {
        XYChart chart = make.get();
        assertTrue(chart.getSeriesMap().size() > 0, name + " has no series");

        Path png = dir.resolve(name + ".png");
        Charts.save(chart, png);
        byte[] pngBytes = Files.readAllBytes(png);
        assertTrue(pngBytes.length > PNG_SIGNATURE.length, name + ".png is empty");
        // ISO/IEC 15948:2004, section 5.2: the signature
        assertArrayEquals(PNG_SIGNATURE, Arrays.copyOf(pngBytes, PNG_SIGNATURE.length), name + ".png signature");
        // javax.imageio decodes it at the documented default size, 800 x 600
        BufferedImage image = ImageIO.read(new ByteArrayInputStream(pngBytes));
        assertNotNull(image, name + ".png is not readable by javax.imageio");
        assertEquals(Charts.WIDTH, image.getWidth());
        assertEquals(Charts.HEIGHT, image.getHeight());
        assertEquals(800, image.getWidth()); // the documented default (Charts class Javadoc)
        assertEquals(600, image.getHeight());
        assertTrue(hasSeveralColours(image), name + ".png is blank");

        Path svg = dir.resolve(name + ".svg");
        Charts.save(chart, svg);
        byte[] svgBytes = Files.readAllBytes(svg);
        assertTrue(svgBytes.length > MIN_SVG_BYTES, name + ".svg has only " + svgBytes.length + " bytes");
        String head = new String(svgBytes, 0, Math.min(400, svgBytes.length), StandardCharsets.UTF_8);
        // XML 1.0 (W3C), section 2.8: the XML declaration comes first; SVG 1.1: the root element is svg
        assertTrue(head.startsWith("<?xml"), name + ".svg starts with " + head.substring(0, Math.min(40, head.length())));
        assertTrue(head.contains("<svg"), name + ".svg has no svg element near its start");
        Document doc = parse(svgBytes);
        assertEquals("svg", doc.getDocumentElement().getLocalName());
        assertEquals(SVG_NAMESPACE, doc.getDocumentElement().getNamespaceURI());

        // only the two files: the atomic save left no temporary file behind
        try (Stream<Path> files = Files.list(dir)) {
            assertEquals(2, files.count());
        }
    }

    @Test
    void badExtensionLeavesAnExistingFileIntact(@TempDir Path dir) throws IOException {
        XYChart chart = Charts.scoreHistogram(new double[] {1, 2, 3}, 2.5, 4);
        Path existing = dir.resolve("chart.pdf");
        byte[] before = "an older file".getBytes(StandardCharsets.UTF_8);
        Files.write(existing, before);
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Charts.save(chart, existing));
        // common practice, no source: the message names the file and what was expected
        assertTrue(e.getMessage().contains("chart.pdf") && e.getMessage().contains(".png"), e.getMessage());
        assertArrayEquals(before, Files.readAllBytes(existing));
        Path noExtension = dir.resolve("chart");
        Files.write(noExtension, before);
        assertThrows(IllegalArgumentException.class, () -> Charts.save(chart, noExtension));
        assertArrayEquals(before, Files.readAllBytes(noExtension));
        try (Stream<Path> files = Files.list(dir)) {
            assertEquals(2, files.count(), "a temporary file was left behind");
        }
    }

    @Test
    void existingPngIsReplacedWhole(@TempDir Path dir) throws IOException {
        Path png = dir.resolve("chart.png");
        Files.write(png, "not a png".getBytes(StandardCharsets.UTF_8));
        Charts.save(Charts.boundBreakdown(exactReport()), png);
        // javax.imageio reads the new file completely
        BufferedImage image = ImageIO.read(png.toFile());
        assertNotNull(image);
        assertEquals(Charts.WIDTH, image.getWidth());
    }

    @Test
    void breakdownNeedsTheExactBound() {
        BoundReport mc = BoundReports.monteCarlo(100, 8, new double[] {1.0, 2.0});
        // BoundReport's Javadoc: a Monte Carlo estimate has no per-step terms
        assertThrows(IllegalArgumentException.class, () -> Charts.boundBreakdown(mc));
    }

    /**
     * Every term of the bound is on the chart or named: a decoder term that is not above 0 (a
     * density's negative log can be below 0) cannot sit on the log scale, and its value is then
     * written on the chart; a positive one is its own series.
     */
    @Test
    void breakdownShowsTheDecoderTermOrSaysWhyNot() {
        XYChart positive = Charts.boundBreakdown(exactReport());
        assertTrue(positive.getSeriesMap().keySet().stream().anyMatch(k -> k.startsWith("decoder L_0 at t = 1")),
                positive.getSeriesMap().keySet().toString());
        int steps = 50;
        double[] perStep = new double[steps + 1];
        perStep[0] = 1e-4;
        perStep[1] = -2.5;
        for (int t = 2; t <= steps; t++) {
            perStep[t] = 0.02 + 1.5 / t;
        }
        XYChart negative = Charts.boundBreakdown(BoundReports.exact(steps, 2, new double[] {2.0, 2.5}, new double[] {0.3, 0.2}, perStep));
        assertTrue(negative.getSeriesMap().keySet().stream().noneMatch(k -> k.startsWith("decoder")),
                negative.getSeriesMap().keySet().toString());
        assertTrue(negative.getSeriesMap().containsKey("L_{t-1}, t = 2..50"), negative.getSeriesMap().keySet().toString());
    }

    /**
     * XChart labels a logarithmic axis at powers of ten only (as its charts show), so the step-count
     * and training-plan charts take a logarithmic cost axis only when it holds two powers of ten.
     */
    @Test
    void logarithmicCostAxisOnlyWithTwoLabelledDecades() {
        assertTrue(Charts.logarithmicKeepsLabels(new double[] {45, 213, 4600}));      // 100 and 1,000 inside
        assertTrue(Charts.logarithmicKeepsLabels(new double[] {5, 120}));             // 10 and 100
        assertFalse(Charts.logarithmicKeepsLabels(new double[] {81, 139, 508}));      // only 100
        assertFalse(Charts.logarithmicKeepsLabels(new double[] {12, 110}));           // only 100
        assertFalse(Charts.logarithmicKeepsLabels(new double[] {0, 50, 5000}));       // not all above 0
    }

    /** The running mean drawn over the noisy loss: a window of w values, fewer at the start (definition). */
    @Test
    void runningMeanOfTheLoss() {
        assertArrayEquals(new double[] {1, 1.5, 2, 3, 4}, Charts.runningMean(new double[] {1, 2, 3, 4, 5}, 3), ROUNDING);
    }

    @Test
    void trainingPlanNeedsAFiniteModel() {
        // Charts.trainingPlan's Javadoc: a model whose samples diverged has no cost to place
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, () -> Charts.trainingPlan(trainingPlan(true)));
        assertTrue(e.getMessage().contains("plan"), e.getMessage());
    }

    /** Four models, T = 10 diverged; or every model diverged. */
    private static TrainingPlan trainingPlan(boolean allDiverged) {
        double nan = Double.NaN;
        List<TrainingPlan.Row> rows = allDiverged
                ? List.of(new TrainingPlan.Row(10, 500, 10, 2, 1.6, 0.03, nan, nan, nan, nan, true),
                        new TrainingPlan.Row(50, 500, 10, 2, 1.4, 0.03, nan, nan, nan, nan, true))
                : List.of(new TrainingPlan.Row(10, 500, 10, 2, 1.6, 0.03, nan, nan, nan, nan, true),
                        new TrainingPlan.Row(25, 500, 10, 2, 1.45, 0.03, 0.02, 0.05, 0.08, 30.0, false),
                        new TrainingPlan.Row(50, 500, 10, 2, 1.31, 0.02, 0.01, 0.30, 0.05, 55.0, false),
                        new TrainingPlan.Row(100, 500, 10, 2, 1.30, 0.02, 0.01, 0.40, 0.04, 110.0, false));
        return new TrainingPlan(TrainingBudget.updates(500), 0.02, rows);
    }

    private static BoundReport exactReport() {
        int steps = 50;
        double[] perStep = new double[steps + 1];
        perStep[0] = 1e-4;
        for (int t = 1; t <= steps; t++) {
            perStep[t] = 0.02 + 1.5 / t;
        }
        return BoundReports.exact(steps, 2, new double[] {2.0, 2.5, 3.1}, new double[] {0.3, 0.2, 0.1}, perStep);
    }

    private static Table table(int n, long seed) {
        SplittableRandom rng = new SplittableRandom(seed);
        double[][] rows = new double[n][2];
        for (double[] r : rows) {
            r[0] = 4 + 1.5 * rng.nextGaussian();
            r[1] = r[0] + 0.8 + 0.4 * rng.nextGaussian();
        }
        return Table.of(List.of("supply_c", "return_c"), List.of(ColumnKind.CONTINUOUS, ColumnKind.CONTINUOUS), rows);
    }

    private static boolean hasSeveralColours(BufferedImage image) {
        java.util.Set<Integer> seen = new java.util.HashSet<>();
        for (int y = 0; y < image.getHeight() && seen.size() < 3; y += 7) {
            for (int x = 0; x < image.getWidth() && seen.size() < 3; x += 7) {
                seen.add(image.getRGB(x, y));
            }
        }
        return seen.size() >= 3;
    }

    private static Document parse(byte[] svg) throws Exception {
        DocumentBuilderFactory f = DocumentBuilderFactory.newInstance();
        f.setNamespaceAware(true);
        f.setFeature("http://apache.org/xml/features/nonvalidating/load-external-dtd", false);
        f.setFeature("http://apache.org/xml/features/disallow-doctype-decl", false);
        DocumentBuilder b = f.newDocumentBuilder();
        return b.parse(new ByteArrayInputStream(svg));
    }
}
