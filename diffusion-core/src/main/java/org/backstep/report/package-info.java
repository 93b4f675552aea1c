/**
 * What the jobs return: bounds per record, anomaly screens with their evidence (cell notes,
 * per-column surprisal, ROC points), drift reports, imputations, denoised readings, and the
 * step-count plans for sampling and for training, as immutable values.
 */
package org.backstep.report;
