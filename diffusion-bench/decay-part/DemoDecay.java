import java.util.Locale;

import org.backstep.Backstep;
import org.backstep.Defaults;
import org.backstep.DiffusionModel;
import org.backstep.examples.fleet.FleetTables;
import org.backstep.examples.fleet.ReeferFleet;
import org.backstep.examples.fleet.Telemetry;
import org.backstep.option.Baseline;
import org.backstep.option.Coordinates;
import org.backstep.option.Marginals;
import org.backstep.report.BoundReport;
import org.backstep.table.Table;

/**
 * The demo's fit (examples/demo at its defaults: MainJob's builder, Settings' 24 containers x 3 days,
 * CommandTables' faulty share 1/6 and table seed ReeferFleet.DEFAULT_SEED + seed, held-out rows
 * i % 5 == 0) with each weight decay given, and its step-2 figure: the exact bound of the complete
 * held-out rows, nats per record in model space, bound seed = fit seed (as MainJob). Everything but
 * the decay is the demo's; the constants are copied from the examples module (package-private there).
 *
 * <p>Usage (single-file source): {@code java -cp examples/target/classes:diffusion-bench/target/benchmarks.jar
 * diffusion-bench/decay-part/DemoDecay.java SEEDS DECAYS [standardized|defaults [N [COLUMNS]]]}, e.g. {@code 1,2 0,3e-4};
 * a decay "default" leaves the builder's own; N keeps about N rows of the training part (every k-th;
 * 0 keeps all); COLUMNS, comma-separated, fits only those columns.
 */
public final class DemoDecay {
    private static final int CONTAINERS = 24;       // examples Settings.CONTAINERS
    private static final int DAYS = 3;              // examples Settings.DAYS
    private static final double FAULTY_SHARE = 1.0 / 6.0;  // examples CommandTables.FAULTY_SHARE
    private static final int HOLDOUT = 5;           // examples Settings.HOLDOUT

    public static void main(String[] args) {
        String[] seeds = args[0].split(",");
        String[] decays = args[1].split(",");
        // "standardized": the demo's own options; "defaults": the library's (whitened, N(0, I) part, chosen maps)
        boolean demoOptions = args.length < 3 || args[2].equals("standardized");
        int steps = Defaults.STEPS;
        System.out.println((demoOptions ? "the demo's options (STANDARDIZED, Marginals.STANDARDIZED, Baseline.NONE)"
                : "the library's defaults of coordinates, maps and part") + ", T = " + steps);
        System.out.println("seed  decay     bound(nats/record)  +/-se    bits/dim  original-units  fit s  resolved decay (options)");
        for (String s : seeds) {
            long seed = Long.parseLong(s);
            Telemetry t = ReeferFleet.generate(ReeferFleet.options().withContainers(CONTAINERS).withDays(DAYS)
                    .withSeed(ReeferFleet.DEFAULT_SEED + seed).withFaultyShare(FAULTY_SHARE));
            Table table = FleetTables.cells(t);
            if (args.length > 4) {
                // optional 5th argument: only these columns (a probe of which columns the decay costs)
                table = table.selectColumns(args[4].split(","));
            }
            Table part = table.filterRows(i -> i % HOLDOUT != 0);
            // optional 4th argument: keep every k-th row of the training part, k = rows of the part / N (a size probe)
            int n = args.length > 3 ? Integer.parseInt(args[3]) : 0;
            int every = n > 0 ? Math.max(1, part.rows() / n) : 1;
            Table train = part.filterRows(i -> i % every == 0);
            System.out.println("seed " + seed + ": " + train.rows() + " rows of the training part fitted (every " + every + ")");
            Table heldComplete = table.filterRows(i -> i % HOLDOUT == 0).completeRows();
            for (String d : decays) {
                Backstep.Builder b = Backstep.builder().steps(steps).seed(seed);
                if (demoOptions) {
                    b.coordinates(Coordinates.STANDARDIZED).marginals(Marginals.STANDARDIZED).baseline(Baseline.NONE);
                }
                if (!d.equals("default")) {
                    b.weightDecay(Double.parseDouble(d));
                }
                long t0 = System.nanoTime();
                DiffusionModel m = b.fit(train);
                double fitSeconds = (System.nanoTime() - t0) / 1e9;
                BoundReport bound = m.bound(heldComplete, seed);
                System.out.printf(Locale.ROOT, "%-4d  %-8s  %8.3f            %.3f    %.4f    %8.3f        %5.1f  %s%n", seed, d,
                        bound.meanNats(), bound.standardErrorOfMean(), bound.bitsPerDimension(), bound.meanNatsOriginalUnits(),
                        fitSeconds, m.options().weightDecay());
            }
        }
    }
}
