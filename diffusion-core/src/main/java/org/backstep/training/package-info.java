/**
 * Training as the caller sees it: the progress listener and its messages, the per-epoch history,
 * and the provenance every fitted model carries.
 */
package org.backstep.training;
