/**
 * The likelihood engine of the probability-flow ODE (not API): the exact log-density of a record
 * under the deterministic flow that shares the model's estimator ({@code ProbabilityFlow}), and the
 * one place that finds the trace of the estimator's Jacobian ({@code EpsilonTrace}).
 */
package org.backstep.internal.flow;
