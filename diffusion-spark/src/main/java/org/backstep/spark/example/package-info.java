/**
 * An example Spark job for {@code spark-submit}: fit a model to a CSV or Parquet file, or score,
 * impute or denoise one with a saved model, writing Parquet.
 */
package org.backstep.spark.example;
