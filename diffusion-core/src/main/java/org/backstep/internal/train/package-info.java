/**
 * The training engine (not API): the preparation of the rows ({@code TrainingRows}), the filling of
 * training rows with missing cells by stochastic EM ({@code GapFilling}), the run of minibatch
 * updates ({@code TrainingRun}), the step sampler and the loss with its gradient.
 */
package org.backstep.internal.train;
