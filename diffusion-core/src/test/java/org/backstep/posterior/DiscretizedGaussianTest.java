package org.backstep.posterior;

import static org.backstep.posterior.Near.assertClose;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Objects;
import org.apache.commons.math3.distribution.NormalDistribution;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.function.Executable;

/**
 * The discretized Gaussian decoder of Ho et al. 2020, eq. 13, over unit-wide integer bins: log Phi
 * and the log mass of a bin against mpmath at 2000 digits (normal-mass-reference.txt, made by
 * normal_mass_reference.sh beside it) from the bulk to 1,000,000 standard deviations out; bins
 * against commons-math3's NormalDistribution in the bulk; total probability over the support; the
 * bin lookup of draws; and the refusals.
 */
class DiscretizedGaussianTest {

    /**
     * log Phi and log masses against mpmath, relative: commons-math3's erfc is good to a few 1e-14
     * (a regularized gamma function to 1e-15, times exp of an argument up to 200; the worst case
     * measured is 4.5e-14, log Phi(20) = -2.75e-89), and a log mass from two log Phi adds a few
     * ulps of each.
     */
    private static final double REFERENCE_REL = 1e-13;

    /**
     * Masses against commons-math3 in the bulk (mass above 1e-3), whose cumulativeProbability
     * differences are good to about 1e-16 absolute there.
     */
    private static final double BULK_REL = 1e-12;

    /** Total probability over the support: a few hundred terms of size up to 1 (common practice, no source). */
    private static final double TOTAL = 1e-13;

    private record Reference(String kind, double a, double b, double value) {
    }

    private static List<Reference> references() throws IOException {
        List<Reference> out = new ArrayList<>();
        try (InputStream in = Objects.requireNonNull(DiscretizedGaussianTest.class.getResourceAsStream(
                "normal-mass-reference.txt"), "normal-mass-reference.txt");
             BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8))) {
            for (String line = reader.readLine(); line != null; line = reader.readLine()) {
                if (line.isBlank() || line.startsWith("#")) {
                    continue;
                }
                String[] f = line.trim().split("\\s+");
                if (f[0].equals("log_cdf")) {
                    out.add(new Reference(f[0], parse(f[1]), Double.NaN, parse(f[2])));
                } else {
                    out.add(new Reference(f[0], parse(f[1]), parse(f[2]), parse(f[3])));
                }
            }
        }
        return out;
    }

    private static double parse(String s) {
        return switch (s) {
            case "inf" -> Double.POSITIVE_INFINITY;
            case "-inf" -> Double.NEGATIVE_INFINITY;
            default -> Double.parseDouble(s);
        };
    }

    @Test
    void logCdfAndLogMassMatchMpmathFromTheBulkToTheFarTails() throws IOException {
        List<Reference> refs = references();
        assertTrue(refs.size() > 60, "reference table read");
        for (Reference r : refs) {
            if (r.kind().equals("log_cdf")) {
                // mpmath log(ncdf(x)) at 2000 digits (normal_mass_reference.sh)
                assertClose(r.value(), DiscretizedGaussian.logNormalCdf(r.a()), REFERENCE_REL, 0.0,
                        "log Phi(" + r.a() + ")");
            } else {
                // mpmath log(ncdf(b) - ncdf(a)) at 2000 digits (normal_mass_reference.sh)
                double actual = DiscretizedGaussian.logStandardNormalMass(r.a(), r.b());
                assertTrue(Double.isFinite(actual) || r.value() == 0.0, "finite log mass");
                assertClose(r.value(), actual, REFERENCE_REL, 0.0, "log mass of (" + r.a() + ", " + r.b() + ")");
            }
        }
    }

    @Test
    void fortyStandardDeviationsOutIsFiniteAndRight() throws IOException {
        // model value z = n here (shift 0, scale 1), reverse model N(0, 1): standardized edges = bin edges
        DiscretizedGaussian plain = DiscretizedGaussian.unbounded(0.0, 1.0);
        // mpmath values of normal-mass-reference.txt, lines log_mass 37.5 38.5 and -38.5 -37.5
        assertClose(-707.66898931750719, plain.logProbability(38, 0.0, 0.0), REFERENCE_REL, 0.0, "bin 38 sd out");
        assertClose(-707.66898931750719, plain.logProbability(-38, 0.0, 0.0), REFERENCE_REL, 0.0, "bin -38 sd out");
        // the top edge bin of a support ending at 40, shifted so that its lower edge is 40 sd out: line log_mass 40 inf
        DiscretizedGaussian top = DiscretizedGaussian.bounded(-0.5, 1.0, -100, 40);
        assertClose(-804.60844201375379, top.logProbability(40, 0.0, 0.0), REFERENCE_REL, 0.0, "edge bin 40 sd out");
        // the bottom edge bin: line log_mass -inf -40
        DiscretizedGaussian bottom = DiscretizedGaussian.bounded(0.5, 1.0, -40, 100);
        assertClose(-804.60844201375379, bottom.logProbability(-40, 0.0, 0.0), REFERENCE_REL, 0.0, "edge bin -40 sd out");
        // far beyond: 1000 sd, with a narrow reverse variance; only finiteness and the Gaussian exponent
        double far = plain.logProbability(0, 1000.5, Math.log(1.0));
        assertTrue(Double.isFinite(far) && far < -0.5 * 1000 * 1000 + 1000, "1000 sd out: " + far);
    }

    /** (shift, scale, lowest, highest, mean, sd) of bounded columns in the bulk. */
    private static final double[][] BULK = {
        {3.2, 1.7, 0, 9, 0.4, 0.55},
        {0.0, 1.0, -3, 3, 0.1, 1.0},
        {12.5, 4.0, 0, 40, -0.3, 0.2},
        {100.0, 0.5, 98, 103, 0.0, 0.8},    // scale below 1: bins 2 wide in model space
    };

    @Test
    void matchesCommonsMathInTheBulk() {
        for (double[] c : BULK) {
            DiscretizedGaussian g = DiscretizedGaussian.bounded(c[0], c[1], (long) c[2], (long) c[3]);
            NormalDistribution normal = new NormalDistribution(null, c[4], c[5]);
            double logVar = 2.0 * Math.log(c[5]);
            for (long n = (long) c[2]; n <= (long) c[3]; n++) {
                double lower = g.lowerEdge(n);
                double upper = g.upperEdge(n);
                // Ho et al. 2020, eq. 13: Phi((delta+ - mu)/sigma) - Phi((delta- - mu)/sigma), edge bins open,
                // with commons-math3's NormalDistribution
                double mass = Double.isInfinite(lower) ? normal.cumulativeProbability(upper)
                        : Double.isInfinite(upper) ? 1.0 - normal.cumulativeProbability(lower)
                        : normal.probability(lower, upper);
                if (mass > 1e-3) {
                    assertClose(mass, Math.exp(g.logProbability(n, c[4], logVar)), BULK_REL, 0.0,
                            "mass of " + n + " for " + java.util.Arrays.toString(c));
                }
            }
        }
    }

    @Test
    void probabilitiesOverTheSupportSumToOne() {
        for (double[] c : BULK) {
            DiscretizedGaussian g = DiscretizedGaussian.bounded(c[0], c[1], (long) c[2], (long) c[3]);
            double total = 0.0;
            for (long n = (long) c[2]; n <= (long) c[3]; n++) {
                total += Math.exp(g.logProbability(n, c[4], 2.0 * Math.log(c[5])));
            }
            // the bins of a bounded support tile the real line (Ho et al. 2020, eq. 13, edge bins to +-infinity)
            assertEquals(1.0, total, TOTAL, "total over the support of " + java.util.Arrays.toString(c));
        }
        // counts from 0, no highest value: the sum over 0..N plus the normal tail above N + 1/2 is 1
        DiscretizedGaussian counts = DiscretizedGaussian.boundedBelow(2.3, 1.5, 0);
        double mean = 0.7;
        double sd = 0.9;
        double total = 0.0;
        long top = 60;
        for (long n = 0; n <= top; n++) {
            total += Math.exp(counts.logProbability(n, mean, 2.0 * Math.log(sd)));
        }
        double tail = 1.0 - new NormalDistribution(null, mean, sd).cumulativeProbability(counts.upperEdge(top));
        assertEquals(1.0, total + tail, TOTAL, "total of a count column");
        // no edges: a sum over a wide window, with a narrow reverse variance (bins many sd wide)
        DiscretizedGaussian codes = DiscretizedGaussian.unbounded(-4.0, 3.0);
        total = 0.0;
        for (long n = -60; n <= 60; n++) {
            total += Math.exp(codes.logProbability(n, 0.25, 2.0 * Math.log(0.03)));
        }
        assertEquals(1.0, total, TOTAL, "total of an unbounded column, narrow variance");
    }

    @Test
    void integerAtFindsTheBinOfADraw() {
        DiscretizedGaussian g = DiscretizedGaussian.bounded(3.2, 1.7, 0, 9);
        for (long n = 0; n <= 9; n++) {
            assertEquals(n, g.integerAt(g.modelValue(n)), "the centre of bin " + n);
            if (n < 9) {
                double edge = g.upperEdge(n);
                assertEquals(n, g.integerAt(Math.nextDown(edge) - 1e-12), "just below the upper edge of " + n);
                assertEquals(n + 1, g.integerAt(edge + 1e-12), "just above it");
            }
        }
        assertEquals(0, g.integerAt(-1e9), "the bottom edge bin reaches to -infinity");
        assertEquals(9, g.integerAt(1e9), "the top edge bin reaches to +infinity");
        assertEquals(-5, DiscretizedGaussian.unbounded(0.0, 1.0).integerAt(-5.2), "no edges");
        assertEquals(1.0 / 1.7, g.binWidth(), 0.0, "bins are 1/scale wide in model space");
        assertEquals(Double.NEGATIVE_INFINITY, g.lowerEdge(0), 0.0);
        assertEquals(Double.POSITIVE_INFINITY, g.upperEdge(9), 0.0);
        assertEquals((4.5 - 3.2) / 1.7, g.upperEdge(4), 1e-15, "(n + 1/2 - shift) / scale");
    }

    /** Central differences with step 1e-6: truncation about h^2, rounding about 1e-16 |log P| / h (common practice, no source). */
    private static final double FD_REL = 1e-6;

    @Test
    void gradientMatchesCentralDifferences() {
        DiscretizedGaussian g = DiscretizedGaussian.bounded(3.2, 1.7, 0, 9);
        DiscretizedGaussian plain = DiscretizedGaussian.unbounded(0.0, 1.0);
        double h = 1e-6;
        double[][] cases = {   // {n, mean, logVariance, which decoder: 0 bounded, 1 unbounded}
            {0, 0.4, Math.log(0.3), 0}, {4, 0.4, Math.log(0.3), 0}, {9, -1.0, Math.log(2.0), 0},
            {5, 0.0, Math.log(1e-3), 0}, {7, -0.5, Math.log(0.01), 0}, {38, 0.0, 0.0, 1}, {-38, 0.0, 0.0, 1},
            {3, 0.1, Math.log(1e-6), 1}, {0, 0.2, Math.log(25.0), 1},
        };
        for (double[] c : cases) {
            DiscretizedGaussian d = c[3] == 0 ? g : plain;
            long n = (long) c[0];
            double[] grad = new double[2];
            double logP = d.logProbabilityGradientInPlace(n, c[1], c[2], grad);
            assertEquals(d.logProbability(n, c[1], c[2]), logP, 0.0, "log P itself");
            // central differences in mean and log variance (common practice, no source)
            double dMean = (d.logProbability(n, c[1] + h, c[2]) - d.logProbability(n, c[1] - h, c[2])) / (2 * h);
            double dLogVar = (d.logProbability(n, c[1], c[2] + h) - d.logProbability(n, c[1], c[2] - h)) / (2 * h);
            double scale = Math.max(1.0, Math.abs(logP));
            assertClose(dMean, grad[0], FD_REL, scale, "d log P / d mean for " + java.util.Arrays.toString(c));
            assertClose(dLogVar, grad[1], FD_REL, scale, "d log P / d logVariance for " + java.util.Arrays.toString(c));
        }
        double[] far = new double[2];
        plain.logProbabilityGradientInPlace(0, 1000.5, 0.0, far);
        assertTrue(Double.isFinite(far[0]) && Double.isFinite(far[1]) && far[0] < 0, "1000 sd out: " + far[0]);
    }

    private static void assertRefused(Executable call, String... fragments) {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class, call);
        for (String fragment : fragments) {
            assertTrue(e.getMessage().contains(fragment), () -> "message '" + e.getMessage() + "' lacks '" + fragment + "'");
        }
    }

    @Test
    void badInputIsRefused() {
        DiscretizedGaussian g = DiscretizedGaussian.bounded(3.2, 1.7, 0, 9);
        assertRefused(() -> DiscretizedGaussian.bounded(0.0, 0.0, 0, 9), "scale is 0.0");
        assertRefused(() -> DiscretizedGaussian.unbounded(Double.NaN, 1.0), "shift is NaN");
        assertRefused(() -> DiscretizedGaussian.bounded(0.0, 1.0, 5, 5), "highest is 5 and lowest 5");
        assertRefused(() -> DiscretizedGaussian.boundedBelow(0.0, 1.0, 1L << 53), "lowest is " + (1L << 53), "2^52");
        assertRefused(() -> g.logProbability(10, 0.0, 0.0), "n is 10", "from 0 to 9");
        assertRefused(() -> g.logProbability(-1, 0.0, 0.0), "n is -1");
        assertRefused(() -> g.logProbability(3, Double.NaN, 0.0), "mean is NaN");
        assertRefused(() -> g.logProbability(3, 0.0, Double.POSITIVE_INFINITY), "logVariance is Infinity");
        assertRefused(() -> g.logProbability(3, 0.0, -2000.0), "logVariance is -2000.0", "above 0");
        assertRefused(() -> g.logProbability(3, 0.0, 2000.0), "logVariance is 2000.0", "finite");
        assertRefused(() -> g.integerAt(Double.NaN), "z is NaN");
        assertRefused(() -> g.modelValue(12), "n is 12");
        assertRefused(() -> g.logProbabilityGradientInPlace(3, 0.0, 0.0, new double[3]), "gradient has 3 entries");
    }
}
