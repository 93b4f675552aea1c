package org.backstep.report;

/**
 * One two-sample test of a {@link DriftReport}: a reference batch against a new batch, on the
 * records' scores or on one column.
 *
 * @param subject {@link DriftReport#SCORE} for the records' scores, else the column's name
 * @param test the test's name: "Kolmogorov-Smirnov" or "chi-squared"
 * @param statistic the test statistic: the largest distance between the two empirical
 *     distribution functions (Kolmogorov-Smirnov), or Pearson's X^2 of the 2 x 2 table of counts
 * @param pValue the test's own p-value
 * @param adjustedPValue the p-value adjusted for the number of tests (Holm 1979), at least pValue
 * @param referenceCount the reference batch's values tested (observed cells, or scored records)
 * @param batchCount the new batch's values tested
 */
public record DriftTest(String subject, String test, double statistic, double pValue, double adjustedPValue,
                        int referenceCount, int batchCount) {

    /** Refuses null names. */
    public DriftTest {
        java.util.Objects.requireNonNull(subject, "subject is null; expected a value");
        java.util.Objects.requireNonNull(test, "test is null; expected a value");
    }

    /**
     * @param level the family-wise error rate, in (0, 1)
     * @return true if the adjusted p-value is at most the level
     */
    public boolean rejects(double level) {
        return adjustedPValue <= level;
    }
}
