/**
 * What the jobs on a fitted model return: bounds per record, anomaly screens, imputations,
 * denoised readings and step-count plans, as immutable values.
 */
package org.backstep.report;
