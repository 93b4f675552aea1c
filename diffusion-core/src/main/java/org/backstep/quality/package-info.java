/**
 * Sample-quality statistics for synthetic rows: the two-sample energy-distance test, per-column
 * Kolmogorov-Smirnov statistics, and nearest-record distances for a memorization check.
 */
package org.backstep.quality;
