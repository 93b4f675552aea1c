package org.backstep.bench;

import java.util.Arrays;
import java.util.SplittableRandom;
import java.util.concurrent.TimeUnit;

import org.apache.commons.math3.distribution.NormalDistribution;
import org.backstep.table.ColumnTransform;
import org.openjdk.jmh.annotations.Benchmark;
import org.openjdk.jmh.annotations.BenchmarkMode;
import org.openjdk.jmh.annotations.Fork;
import org.openjdk.jmh.annotations.Level;
import org.openjdk.jmh.annotations.Measurement;
import org.openjdk.jmh.annotations.Mode;
import org.openjdk.jmh.annotations.OutputTimeUnit;
import org.openjdk.jmh.annotations.Param;
import org.openjdk.jmh.annotations.Scope;
import org.openjdk.jmh.annotations.Setup;
import org.openjdk.jmh.annotations.State;
import org.openjdk.jmh.annotations.Warmup;

/**
 * One {@link ColumnTransform.Kind#NORMAL_SCORES} column map, in microseconds per call of 64 cells:
 * {@link #forward} maps 64 values spread over the knots' range plus 3 bandwidths on either side
 * (what the bound's log-Jacobian and the fit-time criterion call), {@link #inverse} decodes the 64
 * standard normal quantiles at (i + 1/2) / 64 (what sampling and imputation call). The knots are
 * {@code knots} seeded draws of a skewed column (a lognormal, log-sd 0.75, with 10% of the values in
 * a second mode at -2), the bandwidth {@code bandwidth} times Silverman's rule, the criterion's
 * smallest and next-to-largest choices.
 */
@BenchmarkMode(Mode.AverageTime)
@OutputTimeUnit(TimeUnit.MICROSECONDS)
@Warmup(iterations = 3, time = 1)
@Measurement(iterations = 5, time = 1)
@Fork(value = 1, jvmArgsAppend = {"-Xmx1g"})
public class NormalScoresBenchmark {

    static final int CELLS = 64;

    /** A fitted map and the cells it maps. */
    @State(Scope.Benchmark)
    public static class Map {

        /** The number of knots (training rows). */
        @Param({"256", "1024"})
        public int knots;

        /** The bandwidth as a multiple of Silverman's rule. */
        @Param({"0.5", "4"})
        public double bandwidth;

        ColumnTransform map;
        double[] values;
        double[] scores;

        /** Draws the knots and the cells. */
        @Setup(Level.Trial)
        public void setUp() {
            SplittableRandom random = new SplittableRandom(61);
            double[] v = new double[knots];
            for (int i = 0; i < knots; i++) {
                double g = gaussian(random);
                v[i] = random.nextDouble() < 0.1 ? -2 + 0.3 * g : Math.exp(0.75 * g);
            }
            map = ColumnTransform.normalScores(v, bandwidth * ColumnTransform.silvermanBandwidth(v));
            double[] k = map.knots();
            Arrays.sort(k);
            double lo = k[0] - 3 * map.scale();
            double hi = k[k.length - 1] + 3 * map.scale();
            values = new double[CELLS];
            scores = new double[CELLS];
            NormalDistribution normal = new NormalDistribution();
            for (int i = 0; i < CELLS; i++) {
                values[i] = lo + (hi - lo) * (i + 0.5) / CELLS;
                scores[i] = normal.inverseCumulativeProbability((i + 0.5) / CELLS);
            }
        }

        private static double gaussian(SplittableRandom random) {
            return Math.sqrt(-2 * Math.log(1 - random.nextDouble())) * Math.cos(2 * Math.PI * random.nextDouble());
        }
    }

    /**
     * @param m the map and cells
     * @return the sum of z(x) and log dz/dx over the cells
     */
    @Benchmark
    public double forward(Map m) {
        double sum = 0;
        for (double x : m.values) {
            double[] zl = m.map.forwardWithLogJacobian(x);
            sum += zl[0] + zl[1];
        }
        return sum;
    }

    /**
     * @param m the map and cells
     * @return the sum of x(z) over the cells
     */
    @Benchmark
    public double inverse(Map m) {
        double sum = 0;
        for (double z : m.scores) {
            sum += m.map.inverse(z);
        }
        return sum;
    }
}
