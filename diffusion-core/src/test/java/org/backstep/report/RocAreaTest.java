package org.backstep.report;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.ArrayList;
import java.util.List;
import org.apache.commons.math3.random.Well19937c;
import org.apache.commons.math3.stat.inference.MannWhitneyUTest;
import org.backstep.option.ThresholdRule;
import org.junit.jupiter.api.Test;

/** The area under the ROC curve by ranks, against a hand count, commons-math3 and the trapezoid rule. */
class RocAreaTest {

    /** Identities evaluated in double. */
    private static final double IDENTITY = 1e-12;

    @Test
    void aCaseCountedByHand() {
        // by hand: positives {2, 3}, negatives {1, 2}: pairs (2>1) 1, (2=2) 1/2, (3>1) 1, (3>2) 1: 3.5 / 4
        // (Hanley & McNeil 1982: the area is the share of pairs ordered right, ties counting half)
        assertEquals(0.875, RocArea.of(new double[] {2, 3, 1, 2}, new boolean[] {true, true, false, false},
                new boolean[] {false, false, true, true}), IDENTITY);
        // a record in neither class is left out: the 100 changes nothing
        assertEquals(0.875, RocArea.of(new double[] {2, 3, 1, 100, 2}, new boolean[] {true, true, false, false, false},
                new boolean[] {false, false, true, false, true}), IDENTITY);
        // +infinity ranks above every finite score: 1 pair right of 1
        assertEquals(1.0, RocArea.of(new double[] {Double.POSITIVE_INFINITY, 5}, new boolean[] {true, false},
                new boolean[] {false, true}), IDENTITY);
    }

    @Test
    void theAreaIsMannWhitneyUOverThePairsAndTheTrapezoidUnderTheCurve() {
        Well19937c rng = new Well19937c(9);
        int n = 300;
        double[] scores = new double[n];
        boolean[] pos = new boolean[n];
        boolean[] neg = new boolean[n];
        List<Double> x = new ArrayList<>();
        List<Double> y = new ArrayList<>();
        List<Integer> faults = new ArrayList<>();
        for (int i = 0; i < n; i++) {
            pos[i] = i % 7 == 0;
            neg[i] = !pos[i];
            scores[i] = Math.round(4 * (rng.nextGaussian() + (pos[i] ? 1.0 : 0.0))) / 4.0;   // rounded: ties
            (pos[i] ? x : y).add(scores[i]);
            if (pos[i]) {
                faults.add(i);
            }
        }
        double area = RocArea.of(scores, pos, neg);
        // commons-math3's Mann-Whitney U (mid-ranks for ties) is max(U_pos, U_neg), and U_pos + U_neg = n_pos n_neg
        // (Mann & Whitney 1947); the positives score higher here, so U_pos is the larger
        double u = new MannWhitneyUTest().mannWhitneyU(x.stream().mapToDouble(Double::doubleValue).toArray(),
                y.stream().mapToDouble(Double::doubleValue).toArray());
        assertTrue(area > 0.5, "area " + area);
        assertEquals(u / ((double) x.size() * y.size()), area, IDENTITY);
        // the trapezoid area under AnomalyScreen's ROC points is the same statistic (Hanley & McNeil 1982)
        AnomalyScreen s = new AnomalyScreen(ThresholdRule.quantile(0.99), 1.0, new double[] {0.0}, scores, new int[0],
                List.of(), Surprisal.none(List.of("x")));
        List<RocPoint> pts = s.roc(faults.stream().mapToInt(Integer::intValue).toArray());
        double trapezoid = 0;
        for (int k = 1; k < pts.size(); k++) {
            RocPoint a = pts.get(k - 1);
            RocPoint b = pts.get(k);
            trapezoid += (b.falsePositiveRate() - a.falsePositiveRate()) * (a.truePositiveRate() + b.truePositiveRate()) / 2;
        }
        assertEquals(trapezoid, area, IDENTITY);
        // delegation, no source: AnomalyScreen.rocArea hands its scores and the fault rows to RocArea.of; this
        // checks that wiring (which rows are labelled faults, the scores' order), not the statistic again
        assertEquals(area, s.rocArea(faults.stream().mapToInt(Integer::intValue).toArray()), 0.0);
    }

    @Test
    void badInputIsRefusedByName() {
        boolean[] t = {true, false};
        boolean[] f = {false, true};
        assertTrue(assertThrows(IllegalArgumentException.class, () -> RocArea.of(new double[3], t, f)).getMessage()
                .contains("length of scores"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> RocArea.of(new double[2], t, t)).getMessage()
                .contains("record 0 is marked both"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> RocArea.of(new double[] {Double.NaN, 1}, t, f))
                .getMessage().contains("record 0 is NaN"));
        assertTrue(assertThrows(IllegalArgumentException.class, () -> RocArea.of(new double[2], t, new boolean[2]))
                .getMessage().contains("1 positive and 0 negative"));
    }
}
