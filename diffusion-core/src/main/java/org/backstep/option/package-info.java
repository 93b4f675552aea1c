/**
 * The builder's choices as values: {@code FitOptions} (every option of a fit), {@code TrainingBudget},
 * and the enums and records that name a variance, loss, step sampling, schedule family,
 * learning-rate schedule or sampler.
 */
package org.backstep.option;
