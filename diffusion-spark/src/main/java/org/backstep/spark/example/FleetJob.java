package org.backstep.spark.example;

import java.io.IOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

import org.apache.spark.sql.Dataset;
import org.apache.spark.sql.Row;
import org.apache.spark.sql.SparkSession;
import org.backstep.spark.BackstepEstimator;
import org.backstep.spark.BackstepModel;
import org.backstep.spark.BackstepParams;

/**
 * An example job for {@code spark-submit} with the shaded jar:
 * <pre>
 *   fit   INPUT MODEL_DIR [--key COL] [--binary COL,COL] [--integer COL,COL] [--categorical COL,COL]
 *         [--log COL,COL] [--sample-rows N] [--screen Q] [--seed S] [--steps T] [--hidden W,W] [--epochs N]
 *   apply MODEL_DIR INPUT OUTPUT [--job score|impute|denoise] [--noise-sd a,b,...] [--draws K]
 *         [--keep-draws true|false] [--score-draws K] [--key COL] [--seed S]
 * </pre>
 * INPUT is a Parquet folder or file, or a CSV file with a header row (by its name's ending);
 * MODEL_DIR is a Spark ML folder ({@link BackstepModel#write()}); OUTPUT a Parquet folder, which
 * must not exist. Exit code 2 for bad arguments. Column kinds are the estimator's
 * ({@link BackstepEstimator}): boolean columns binary, string columns categorical (inputs only when
 * named by {@code --categorical}), other numeric columns continuous unless {@code --binary} or
 * {@code --integer} names them.
 *
 * <p>Cautions: imputed and denoised values are not measurements; a likelihood score ranks records
 * and is not a calibrated probability of a fault; for safety-, health- or compliance-critical
 * decisions, defer to local regulations and qualified review.
 */
public final class FleetJob {

    private FleetJob() {
    }

    /**
     * Runs the job in the session spark-submit sets up, then stops it.
     *
     * @param args see the class comment
     */
    public static void main(String[] args) {
        SparkSession spark = SparkSession.builder().appName("backstep-fleet-job").getOrCreate();
        int code;
        try {
            code = run(spark, args, System.err);
        } finally {
            spark.stop();
        }
        if (code != 0) {
            System.exit(code);
        }
    }

    /**
     * Runs the job in a given session (left running).
     *
     * @param spark the session
     * @param args see the class comment
     * @param err where the reason for a bad argument goes
     * @return 0, or 2 for bad arguments
     */
    public static int run(SparkSession spark, String[] args, java.io.PrintStream err) {
        try {
            List<String> positional = new ArrayList<>();
            Map<String, String> options = new LinkedHashMap<>();
            for (int i = 0; i < args.length; i++) {
                if (args[i].startsWith("--")) {
                    if (i + 1 >= args.length) {
                        throw new IllegalArgumentException("option " + args[i] + " needs a value");
                    }
                    options.put(args[i], args[++i]);
                } else {
                    positional.add(args[i]);
                }
            }
            String command = positional.isEmpty() ? "" : positional.get(0);
            switch (command) {
                case "fit" -> fit(spark, positional, options);
                case "apply" -> apply(spark, positional, options);
                default -> throw new IllegalArgumentException("the first argument is '" + command + "'; expected fit or apply");
            }
            return 0;
        } catch (IllegalArgumentException e) {
            err.println("fleet-job: " + e.getMessage());
            return 2;
        }
    }

    private static void fit(SparkSession spark, List<String> pos, Map<String, String> opt) {
        need(pos, 3, "fit INPUT MODEL_DIR");
        BackstepEstimator est = new BackstepEstimator();
        for (Map.Entry<String, String> o : opt.entrySet()) {
            switch (o.getKey()) {
                case "--key" -> est.setRowKeyCol(o.getValue());
                case "--binary" -> est.setBinaryCols(o.getValue().split(","));
                case "--integer" -> est.setIntegerCols(o.getValue().split(","));
                case "--categorical" -> est.setCategoricalCols(o.getValue().split(","));
                case "--log" -> est.setLogCols(o.getValue().split(","));
                case "--sample-rows" -> est.setSampleRows(integer(o));
                case "--screen" -> est.setScreenQuantile(number(o));
                case "--seed" -> est.setSeed(Long.parseLong(o.getValue()));
                case "--steps" -> est.setSteps(integer(o));
                case "--hidden" -> est.setHidden(Arrays.stream(o.getValue().split(",")).mapToInt(Integer::parseInt).toArray());
                case "--epochs" -> est.setEpochs(integer(o));
                default -> throw new IllegalArgumentException("unknown option " + o.getKey() + " for fit");
            }
        }
        BackstepModel model = est.fit(read(spark, pos.get(1)));
        try {
            model.write().save(pos.get(2));
        } catch (IOException e) {
            throw new IllegalStateException("could not save the model to " + pos.get(2), e);
        }
    }

    private static void apply(SparkSession spark, List<String> pos, Map<String, String> opt) {
        need(pos, 4, "apply MODEL_DIR INPUT OUTPUT");
        BackstepModel model = BackstepModel.read().session(spark).load(pos.get(1));
        for (Map.Entry<String, String> o : opt.entrySet()) {
            switch (o.getKey()) {
                case "--job" -> model.setJob(o.getValue());
                case "--noise-sd" -> model.setNoiseSd(Arrays.stream(o.getValue().split(",")).mapToDouble(Double::parseDouble).toArray());
                case "--draws" -> model.setDraws(integer(o));
                case "--keep-draws" -> model.setKeepDraws(bool(o));
                case "--score-draws" -> model.setScoreDraws(integer(o));
                case "--key" -> model.setRowKeyCol(o.getValue());
                case "--seed" -> model.setSeed(Long.parseLong(o.getValue()));
                default -> throw new IllegalArgumentException("unknown option " + o.getKey() + " for apply");
            }
        }
        if (!List.of(BackstepParams.SCORE, BackstepParams.IMPUTE, BackstepParams.DENOISE).contains(model.getOrDefault(model.job()))) {
            throw new IllegalArgumentException("--job is '" + model.getOrDefault(model.job()) + "'; expected score, impute or denoise");
        }
        model.transform(read(spark, pos.get(2))).write().parquet(pos.get(3));
    }

    private static Dataset<Row> read(SparkSession spark, String input) {
        if (input.toLowerCase(java.util.Locale.ROOT).endsWith(".csv")) {
            return spark.read().option("header", "true").option("inferSchema", "true").csv(input);
        }
        return spark.read().parquet(input);
    }

    private static void need(List<String> pos, int n, String usage) {
        if (pos.size() != n) {
            throw new IllegalArgumentException("expected: " + usage + "; got " + pos);
        }
    }

    private static int integer(Map.Entry<String, String> o) {
        try {
            return Integer.parseInt(o.getValue());
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(o.getKey() + " is '" + o.getValue() + "'; expected an integer", e);
        }
    }

    private static boolean bool(Map.Entry<String, String> o) {
        if (!List.of("true", "false").contains(o.getValue())) {
            throw new IllegalArgumentException(o.getKey() + " is '" + o.getValue() + "'; expected true or false");
        }
        return Boolean.parseBoolean(o.getValue());
    }

    private static double number(Map.Entry<String, String> o) {
        try {
            return Double.parseDouble(o.getValue());
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(o.getKey() + " is '" + o.getValue() + "'; expected a number", e);
        }
    }
}
