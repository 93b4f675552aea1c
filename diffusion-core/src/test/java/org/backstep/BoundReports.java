package org.backstep;

import org.backstep.report.BoundReport;

/** Bound reports for tests, built by {@link BoundReport}'s factories with zero log-Jacobians. */
public final class BoundReports {

    private BoundReports() {
    }

    /**
     * An exact report with zero log-Jacobians and zero standard errors.
     *
     * @param steps T
     * @param dimensions D
     * @param continuous per record, the continuous part (copied)
     * @param binary per record, the binary part (copied)
     * @param perStep index 0 the prior term, index t the term of step t (copied)
     * @return the report
     */
    public static BoundReport exact(int steps, int dimensions, double[] continuous, double[] binary, double[] perStep) {
        return BoundReport.exact(steps, dimensions, new BoundReport.RecordNats(continuous, binary,
                new double[continuous.length]), perStep);
    }

    /**
     * A Monte Carlo report (no per-step breakdown).
     *
     * @param steps T
     * @param draws K
     * @param continuous per record, the continuous part (copied)
     * @return the report
     */
    public static BoundReport monteCarlo(int steps, int draws, double[] continuous) {
        return BoundReport.sampled(steps, draws, 1, new BoundReport.RecordNats(continuous, new double[continuous.length],
                new double[continuous.length]), new double[continuous.length]);
    }
}
