/**
 * What the jobs return: bounds per record, anomaly screens, imputations,
 * denoised readings, and the step-count plans for sampling and for training, as immutable values.
 */
package org.backstep.report;
