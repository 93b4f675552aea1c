package org.backstep.bench;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.List;
import java.util.Locale;
import java.util.Map;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;

/**
 * Turns a JMH JSON result file into a short text table, with the figures each benchmark stands for:
 * milliseconds per 1,000 records for bounds and strided sampling, training steps per second, and
 * for the full-chain sampling reference and the training step the achieved GFLOP/s against the
 * machine's peak.
 *
 * <p>Usage: {@code java -cp benchmarks.jar org.backstep.bench.ResultTable results.json [peakGflops "how derived"]}.
 * The peak is given by the calling script (see {@code bench.sh}); without it no ratio is shown.
 */
public final class ResultTable {

    private ResultTable() {
    }

    /**
     * Prints the table of a JMH JSON file to standard output.
     *
     * @param args the JSON file, then optionally the peak in GFLOP/s and a note on how it was derived
     * @throws IOException if the file cannot be read
     */
    public static void main(String[] args) throws IOException {
        if (args.length < 1) {
            System.err.println("usage: ResultTable results.json [peakGflops \"derivation\"]");
            System.exit(2);
        }
        double peak = args.length > 1 ? Double.parseDouble(args[1]) : Double.NaN;
        String derivation = args.length > 2 ? args[2] : "";
        System.out.print(render(new ObjectMapper().readTree(Files.readString(Path.of(args[0]))), peak, derivation));
    }

    /**
     * The table.
     *
     * @param results the JMH result array
     * @param peak the machine's peak in GFLOP/s, NaN if unknown
     * @param derivation how the peak was derived
     * @return the text
     */
    static String render(JsonNode results, double peak, String derivation) {
        StringBuilder out = new StringBuilder();
        if (results.size() > 0) {
            JsonNode first = results.get(0);
            out.append(String.format(Locale.ROOT, "JMH %s, JVM %s %s%n", first.path("jmhVersion").asText(),
                    first.path("vmName").asText(), first.path("vmVersion").asText()));
        }
        if (!Double.isNaN(peak)) {
            out.append(String.format(Locale.ROOT, "peak %.1f GFLOP/s FP32: %s%n", peak, derivation));
        }
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"benchmark", "parameters", "score", "unit", "meaning"});
        for (JsonNode r : results) {
            String name = r.path("benchmark").asText().replaceFirst("^org\\.backstep\\.bench\\.", "");
            JsonNode metric = r.path("primaryMetric");
            double score = metric.path("score").asDouble();
            double error = metric.path("scoreError").asDouble(Double.NaN);
            String unit = metric.path("scoreUnit").asText();
            StringBuilder params = new StringBuilder();
            JsonNode p = r.path("params");
            for (Iterator<Map.Entry<String, JsonNode>> it = p.fields(); it.hasNext(); ) {
                Map.Entry<String, JsonNode> e = it.next();
                params.append(params.length() > 0 ? " " : "").append(e.getKey()).append('=').append(e.getValue().asText());
            }
            String scoreText = Double.isNaN(error)
                    ? String.format(Locale.ROOT, "%.1f", score)
                    : String.format(Locale.ROOT, "%.1f \u00b1 %.1f", score, error);
            rows.add(new String[] {name, params.toString(), scoreText, unit, meaning(name, p, score, unit, peak)});
        }
        int[] widths = new int[5];
        for (String[] row : rows) {
            for (int i = 0; i < 5; i++) {
                widths[i] = Math.max(widths[i], row[i].length());
            }
        }
        for (String[] row : rows) {
            StringBuilder line = new StringBuilder();
            for (int i = 0; i < 5; i++) {
                line.append(i == 2 ? pad(row[i], widths[i], true) : pad(row[i], widths[i], false)).append(i < 4 ? "  " : "");
            }
            out.append(line.toString().stripTrailing()).append(System.lineSeparator());
        }
        return out.toString();
    }

    private static String meaning(String name, JsonNode p, double score, String unit, double peak) {
        double millis = toMillis(score, unit);
        switch (name) {
            case "BoundBenchmark.exact", "BoundBenchmark.monteCarlo":
                return String.format(Locale.ROOT, "%.0f ms per 1,000 records", millis * 1000.0 / BoundBenchmark.RECORDS);
            case "SamplingBenchmark.strided":
                return String.format(Locale.ROOT, "%.0f ms per 1,000 samples", millis * 1000.0 / SamplingBenchmark.RECORDS);
            case "SamplingBenchmark.reference": {
                int columns = p.path("columns").asInt();
                double flops = SamplingBenchmark.REFERENCE_RECORDS * (double) SamplingBenchmark.STEPS
                        * Fixtures.forwardFlopsPerRow(columns, Fixtures.HIDDEN, 2 * columns, 32, true);
                double seconds = millis / 1000.0;
                return String.format(Locale.ROOT, "%.0f row-steps/s, %s",
                        SamplingBenchmark.REFERENCE_RECORDS * (double) SamplingBenchmark.STEPS / seconds,
                        gflops(flops / seconds / 1e9, peak));
            }
            case "TrainingStepBenchmark.trainingStep": {
                if (!"ops/s".equals(unit)) {
                    return "";
                }
                double flops = TrainingStepBenchmark.flopsPerStep(TrainingStepBenchmark.shapeFor(p.path("columns").asText()));
                return String.format(Locale.ROOT, "%.1f steps/s, %s", score, gflops(score * flops / 1e9, peak));
            }
            default:
                return "";
        }
    }

    private static String gflops(double achieved, double peak) {
        if (Double.isNaN(peak)) {
            return String.format(Locale.ROOT, "%.1f GFLOP/s", achieved);
        }
        return String.format(Locale.ROOT, "%.1f GFLOP/s = %.0f%% of peak (%.2fx from it)", achieved,
                100.0 * achieved / peak, peak / achieved);
    }

    private static double toMillis(double score, String unit) {
        return switch (unit) {
            case "s/op" -> score * 1e3;
            case "ms/op" -> score;
            case "us/op" -> score / 1e3;
            case "ns/op" -> score / 1e6;
            default -> Double.NaN;
        };
    }

    private static String pad(String s, int width, boolean right) {
        String fill = " ".repeat(Math.max(0, width - s.length()));
        return right ? fill + s : s + fill;
    }
}
