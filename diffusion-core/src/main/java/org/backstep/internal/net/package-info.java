/**
 * The reverse network of a diffusion model on tables: a float32 multilayer perceptron on ND4J arrays
 * with hand-written forward and backward passes, its Adam optimizer, weight averaging and a
 * data-parallel training step. This is the hot path of training and sampling.
 */
package org.backstep.internal.net;
