/**
 * Engine: the screening jobs on a fitted model's engine: scores that never go missing (range and
 * missing cells first, then the bound with common random numbers), thresholds, per-column
 * surprisal, and the drift tests between two batches.
 */
package org.backstep.internal.screen;
