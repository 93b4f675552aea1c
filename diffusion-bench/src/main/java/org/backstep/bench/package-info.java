/**
 * JMH benchmarks of Backstep: the training step of the reverse network at several widths and thread
 * counts. Run with {@code java -jar diffusion-bench/target/benchmarks.jar -rf json}.
 */
package org.backstep.bench;
