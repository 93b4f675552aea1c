/**
 * The builder's choices as values: {@code FitOptions} (every option of a fit, validated once for
 * builder and model file alike), {@code Limits} (the one set of limits), {@code TrainingBudget},
 * one options value per job (bound, imputation, denoising, screening with its {@code ThresholdRule},
 * {@code MissingCells} and {@code SurprisalOptions}, drift), and the enums and records that name a
 * variance, loss, step sampling, schedule family, learning-rate schedule or sampler.
 */
package org.backstep.option;
