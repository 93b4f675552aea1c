/**
 * The front door: {@code Backstep.builder()}, {@code Defaults} and the fitted {@code DiffusionModel},
 * with the package-private trainer, reverse chain, bound evaluator, planner and model file behind it.
 */
package org.backstep;
