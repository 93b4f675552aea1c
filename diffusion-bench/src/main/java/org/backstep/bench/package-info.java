/**
 * JMH benchmarks of Backstep: the training step, bounds, and sampling at several step counts, with
 * seeded fixtures. Run all with {@code diffusion-bench/bench.sh}, or {@code java -jar diffusion-bench/target/benchmarks.jar -rf json}.
 * {@code CsvReadMemory} (run by {@code diffusion-bench/csv-memory.sh}) measures the heap that reading a
 * large CSV needs.
 */
package org.backstep.bench;
