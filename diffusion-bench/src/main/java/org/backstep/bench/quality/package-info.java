/**
 * The quality benchmark: Backstep fitted at its defaults, and with the table transforms measured as
 * levers, on the fixed split of four open tables, printed beside the classical models of
 * {@code quality-baselines.sh}. Run with {@code diffusion-bench/quality.sh}.
 */
package org.backstep.bench.quality;
