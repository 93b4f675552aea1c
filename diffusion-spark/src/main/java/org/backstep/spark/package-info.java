/**
 * Backstep on Apache Spark: {@link org.backstep.spark.BackstepEstimator} fits a model to a
 * DataFrame and {@link org.backstep.spark.BackstepModel} scores, screens, imputes and denoises the
 * rows of DataFrames and draws synthetic rows, as Spark ML stages; the rest is the per-partition
 * machinery (one adapter, {@code CoreCalls}, holds every call into the core).
 */
package org.backstep.spark;
