package org.backstep.bench.quality;

import java.io.IOException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.StandardOpenOption;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.stream.IntStream;

import org.backstep.Backstep;
import org.backstep.DiffusionModel;
import org.backstep.table.Table;
import org.backstep.training.EpochRecord;

/**
 * Training that fits the data size (issue 11, the third lever), measured at equal training steps
 * on the fixed split of SOURCES.md: held-out and training bounds (nats per record in SOURCES.md's
 * space, the exact bound over all T steps, mean over bound seeds) of fits that differ in one
 * training option each, on the table as it is (lever DEFAULTS, fitted with standardized maps as
 * STANDARDIZED_MARGINALS: the defaults when the results were measured) or whitened with the N(0, I)
 * part (lever WHITENED_STANDARD_NORMAL_PART).
 *
 * <p>Configurations: {@code base} (the library's defaults); {@code wdX} (decoupled weight decay
 * lambda = X per update, Loshchilov &amp; Hutter 2019); {@code width} (hidden widths w x 3 with
 * w = clamp(round(sqrt(20 n)), 32, 256), n the training rows: about 40 weights per training row
 * in the two hidden-to-hidden layers, the ratio of the default 256 x 3 on the demo's 3,468 rows);
 * {@code ckpt} (fit on 90% of the training rows, the kept weights chosen on the other 10%, every
 * tenth training row) and {@code final} (the same 90%, no checkpoint rows: the last averaged
 * weights). Ensembles of the {@code base} fits, -log mean_m exp(-bound_m) per record, are printed
 * at the end for the seed groups given by {@code --ensembles 1+2+3,4+5+6}.
 *
 * <p>Usage: {@code FitSize --data DIR --labels DIR --lever DEFAULTS --configs base,wd3e-4,width
 * --seeds 1,2 [--tables iris,...] [--bound-seeds 3] [--extra-seeds 3,4 (base only)] [--ensembles 1+2,3+4] --out FILE.csv}.
 * One CSV line per fit is appended to the output as it is made.
 */
public final class FitSize {

    private FitSize() {
    }

    /** Per-record test nats of the base fits (table, lever, seed, bound seed, values), or null. */
    private static Path perRecordOut;

    /** The per-record test nats of one fit, per bound seed, kept for the ensembles. */
    private record Kept(String table, long seed, double[][] perRecord) {
    }

    /**
     * Runs the measurement.
     *
     * @param args see the class comment
     * @throws IOException if a file cannot be read or written
     */
    public static void main(String[] args) throws IOException {
        Map<String, String> opt = Options.parse(args, new java.util.TreeSet<>(Set.of("--data", "--labels", "--lever",
                "--configs", "--seeds", "--bound-seeds", "--tables", "--out", "--records", "--extra-seeds", "--ensembles")));
        Path data = Path.of(opt.get("--data"));
        Path labels = Path.of(opt.get("--labels"));
        Lever lever = Lever.valueOf(opt.getOrDefault("--lever", "DEFAULTS"));
        List<String> configs = List.of(opt.getOrDefault("--configs", "base").split(","));
        List<Long> seeds = Arrays.stream(opt.getOrDefault("--seeds", "1,2").split(",")).map(Long::parseLong).toList();
        int boundSeeds = Integer.parseInt(opt.getOrDefault("--bound-seeds", "3"));
        List<String> tableKeys = List.of(opt.getOrDefault("--tables", "iris,breast_cancer,diabetes_raw_without_SEX").split(","));
        Path out = Path.of(opt.get("--out"));
        perRecordOut = opt.containsKey("--records") ? Path.of(opt.get("--records")) : null;
        if (!Files.exists(out)) {
            Files.writeString(out, "table,lever,config,seed,hidden,fit_s,test_nats,test_by_bound_seed,train_nats,gap,"
                    + "val_mc_best,val_exact_kept,best_epoch,epochs,last_mc,load\n", StandardCharsets.UTF_8);
        }
        List<OpenTable.Split> splits = new ArrayList<>();
        for (OpenTable t : OpenTable.ALL) {
            if (tableKeys.contains(t.key())) {
                splits.add(t.read(data, labels));
            }
        }
        List<Kept> kept = new ArrayList<>();
        List<Long> extra = opt.containsKey("--extra-seeds")
                ? Arrays.stream(opt.get("--extra-seeds").split(",")).map(Long::parseLong).toList() : List.of();
        List<Long> all = new ArrayList<>(seeds);
        all.addAll(extra);
        for (long seed : all) {
            for (OpenTable.Split split : splits) {
                for (String config : extra.contains(seed) ? List.of("base") : configs) {
                    String line = measure(split, lever, config, seed, boundSeeds, kept);
                    Files.writeString(out, line + "\n", StandardCharsets.UTF_8, StandardOpenOption.APPEND);
                    System.err.println(line);
                }
            }
        }
        if (opt.containsKey("--ensembles")) {
            for (OpenTable.Split split : splits) {
                for (String group : opt.get("--ensembles").split(",")) {
                    List<Long> members = Arrays.stream(group.split("\\+")).map(Long::parseLong).toList();
                    List<double[][]> fits = kept.stream()
                            .filter(k -> k.table.equals(split.table().key()) && members.contains(k.seed))
                            .map(Kept::perRecord).toList();
                    if (fits.size() != members.size()) {
                        continue;
                    }
                    double[] byBoundSeed = new double[boundSeeds];
                    for (int b = 0; b < boundSeeds; b++) {
                        int rows = fits.get(0)[b].length;
                        double sum = 0;
                        for (int i = 0; i < rows; i++) {
                            double max = Double.NEGATIVE_INFINITY;
                            for (double[][] f : fits) {
                                max = Math.max(max, -f[b][i]);
                            }
                            double s = 0;
                            for (double[][] f : fits) {
                                s += Math.exp(-f[b][i] - max);
                            }
                            // -log of the mean of exp(-bound_m): a bound on the mixture's -log p
                            sum += -(max + Math.log(s / fits.size()));
                        }
                        byBoundSeed[b] = sum / rows;
                    }
                    String line = String.format(Locale.ROOT, "%s,%s,ensemble %s,0,,,%.4f,%s,,,,,,,,%.2f",
                            split.table().key(), lever.name(), group, Measures.mean(byBoundSeed), joined(byBoundSeed),
                            load());
                    Files.writeString(out, line + "\n", StandardCharsets.UTF_8, StandardOpenOption.APPEND);
                    System.err.println(line);
                }
            }
        }
    }

    /** w = clamp(round(sqrt(20 n)), 32, 256) for n training rows (see the class comment). */
    static int ruleWidth(int rows) {
        return (int) Math.max(32, Math.min(256, Math.round(Math.sqrt(20.0 * rows))));
    }

    private static String measure(OpenTable.Split split, Lever lever, String config, long seed, int boundSeeds,
                                  List<Kept> kept) {
        Table train = split.train();
        Table test = split.test();
        Lever.Encoding enc = lever.fit(train);
        Table encTrain = enc.encode(train);
        // DEFAULTS with standardized maps, as results/fit-size.txt measured them (before Marginals.CHOSEN):
        // each configuration changes one training option, and the choice of maps would add a criterion
        // and a comparison fit to some of them
        Backstep.Builder builder = (lever == Lever.DEFAULTS ? Lever.STANDARDIZED_MARGINALS : lever).builder(seed);
        String hidden = "256x3";
        Table fitRows = encTrain;
        Table validation = null;
        if (config.startsWith("wd")) {
            builder.weightDecay(Double.parseDouble(config.substring(2)));
        } else if (config.equals("width")) {
            int w = ruleWidth(train.rows() - (int) Math.round(0.1 * train.rows()));
            builder.hidden(w, w, w);
            hidden = w + "x3";
        } else if (config.equals("ckpt") || config.equals("final")) {
            int[] fitIdx = IntStream.range(0, train.rows()).filter(i -> i % 10 != 0).toArray();
            int[] valIdx = IntStream.range(0, train.rows()).filter(i -> i % 10 == 0).toArray();
            fitRows = encTrain.selectRows(fitIdx);
            validation = encTrain.selectRows(valIdx);
            if (config.equals("final")) {
                builder.checkpointFraction(0.0);
            }
        } else if (!config.equals("base")) {
            throw new IllegalArgumentException("unknown config " + config);
        }
        long t0 = System.nanoTime();
        DiffusionModel model = config.equals("ckpt") ? builder.fit(fitRows, validation) : builder.fit(fitRows);
        double fitSeconds = (System.nanoTime() - t0) / 1e9;

        double[][] testNats = nats(model, enc, split, test, boundSeeds);
        double[] testMeans = Arrays.stream(testNats).mapToDouble(Measures::mean).toArray();
        double[][] trainNats = nats(model, enc, split, train, boundSeeds);
        double trainMean = Arrays.stream(trainNats).mapToDouble(Measures::mean).average().orElse(Double.NaN);
        double testMean = Measures.mean(testMeans);
        if (config.equals("base")) {
            kept.add(new Kept(split.table().key(), seed, testNats));
            if (perRecordOut != null) {
                StringBuilder sb = new StringBuilder();
                for (int b = 0; b < boundSeeds; b++) {
                    sb.append(split.table().key()).append(',').append(lever.name()).append(',').append(seed).append(',')
                            .append(b + 1).append(',').append(joined(testNats[b]).replace(' ', ',')).append('\n');
                }
                try {
                    Files.writeString(perRecordOut, sb.toString(), StandardCharsets.UTF_8, StandardOpenOption.CREATE,
                            StandardOpenOption.APPEND);
                } catch (IOException e) {
                    throw new java.io.UncheckedIOException(e);
                }
            }
        }
        double valBest = Double.NaN;
        double valExact = Double.NaN;
        double lastMc = Double.NaN;
        int bestEpoch = -1;
        List<EpochRecord> history = model.history();
        for (EpochRecord r : history) {
            if (r.checkpointBound().isPresent()) {
                double v = r.checkpointBound().getAsDouble();
                lastMc = v;
                if (Double.isNaN(valBest) || v < valBest) {
                    valBest = v;
                    bestEpoch = r.epoch();
                }
            }
        }
        if (validation != null && config.equals("ckpt")) {
            int[] valIdx = IntStream.range(0, train.rows()).filter(i -> i % 10 == 0).toArray();
            // in model space, as the checkpoint's Monte Carlo figure is
            Table encVal = enc.encode(train.selectRows(valIdx));
            double s = 0;
            for (int b = 0; b < boundSeeds; b++) {
                s += Measures.mean(model.bound(encVal, b + 1).nats());
            }
            valExact = s / boundSeeds;
        }
        return String.format(Locale.ROOT, "%s,%s,%s,%d,%s,%.1f,%.4f,%s,%.4f,%.4f,%.4f,%.4f,%d,%d,%.4f,%.2f",
                split.table().key(), lever.name(), config, seed, hidden, fitSeconds, testMean, joined(testMeans),
                trainMean, testMean - trainMean, valBest, valExact, bestEpoch, history.size(), lastMc, load());
    }

    /** Per bound seed, per record: nats in SOURCES.md's space. */
    private static double[][] nats(DiffusionModel model, Lever.Encoding enc, OpenTable.Split split, Table rows,
                                   int boundSeeds) {
        Table encoded = enc.encode(rows);
        double[] leverJacobian = enc.logJacobian(rows);
        double[] sourcesJacobian = split.standardized().logJacobian(rows);
        double[][] out = new double[boundSeeds][];
        for (int b = 0; b < boundSeeds; b++) {
            double[] n = model.bound(encoded, b + 1).natsOriginalUnits();
            for (int i = 0; i < n.length; i++) {
                n[i] += -leverJacobian[i] + sourcesJacobian[i];
            }
            out[b] = n;
        }
        return out;
    }

    private static String joined(double[] v) {
        return String.join(" ", Arrays.stream(v).mapToObj(x -> String.format(Locale.ROOT, "%.4f", x)).toList());
    }

    private static double load() {
        return java.lang.management.ManagementFactory.getOperatingSystemMXBean().getSystemLoadAverage();
    }
}
