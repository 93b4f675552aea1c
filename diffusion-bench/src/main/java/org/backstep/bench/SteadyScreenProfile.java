package org.backstep.bench;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Locale;

import org.backstep.DiffusionModel;
import org.backstep.report.AnomalyScreen;
import org.backstep.table.Table;

/**
 * A steady screen at the defaults to profile: fits ({@link Fixtures#steadyFit}) or loads a model of
 * 8 telemetry columns, screens {@code rows} records twice (the
 * first call measures the term profile) and prints the wall and process CPU time of each later call
 * and a checksum of its scores (process CPU time is the steadier figure on a shared machine: the
 * network calls run one OpenBLAS thread each, which does not spin).
 *
 * <pre>
 *   java -cp diffusion-bench/target/benchmarks.jar org.backstep.bench.SteadyScreenProfile MODEL_FILE [rows] [repeats]
 * </pre>
 */
public final class SteadyScreenProfile {

    private SteadyScreenProfile() {
    }

    /** @param args model file, rows, repeats @throws Exception on a file error */
    public static void main(String[] args) throws Exception {
        Path file = Path.of(args[0]);
        int rows = args.length > 1 ? Integer.parseInt(args[1]) : 512;
        int repeats = args.length > 2 ? Integer.parseInt(args[2]) : 1;
        DiffusionModel model;
        if (Files.exists(file)) {
            model = DiffusionModel.load(file);
        } else {
            model = Fixtures.steadyFit(8, 3);
            model.save(file);
        }
        Table held = Fixtures.telemetry(256, 8, 5);
        Table records = Fixtures.telemetry(rows, 8, 6);
        long t0 = System.nanoTime();
        model.screen(held, Fixtures.telemetry(8, 8, 7), 1);
        System.out.printf(Locale.ROOT, "first screen (with the profile) %.1f s%n", (System.nanoTime() - t0) * 1e-9);
        com.sun.management.OperatingSystemMXBean os = (com.sun.management.OperatingSystemMXBean)
                java.lang.management.ManagementFactory.getOperatingSystemMXBean();
        for (int i = 0; i < repeats; i++) {
            t0 = System.nanoTime();
            long cpu0 = os.getProcessCpuTime();
            AnomalyScreen s = model.screen(held, records, 1);
            double sum = 0.0;
            long bits = 0;
            for (double v : s.scores()) {
                sum += v;
                bits = bits * 31 + Double.doubleToLongBits(v);
            }
            System.out.printf(Locale.ROOT, "screen of %d + %d rows: %.2f s, CPU %.2f s, sum %.17g, bits %x%n",
                    held.rows(), rows, (System.nanoTime() - t0) * 1e-9, (os.getProcessCpuTime() - cpu0) * 1e-9, sum,
                    bits);
        }
    }
}
