package org.backstep.report;

/**
 * One point of a receiver operating characteristic: flagging the records whose score is above
 * {@code threshold} flags this share of the normal records and this share of the faulty ones.
 *
 * @param threshold the score, nats; records above it are flagged (+infinity flags none)
 * @param falsePositiveRate flagged normal records over all normal records
 * @param truePositiveRate flagged faulty records over all faulty records
 */
public record RocPoint(double threshold, double falsePositiveRate, double truePositiveRate) {
}
