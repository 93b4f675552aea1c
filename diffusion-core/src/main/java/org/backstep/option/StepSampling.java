package org.backstep.option;

/** How the trainer draws the diffusion step t of each row. */
public enum StepSampling {
    /** t uniform on 1..T. */
    UNIFORM,
    /**
     * t drawn with p_t proportional to sqrt(E[L_t^2]) over the last 10 bound terms of each step,
     * the loss weighted by 1/(T p_t) so that it stays an unbiased estimate (Nichol &amp; Dhariwal
     * 2021, section 3.3, eq. 18). Uniform until every step has 10 terms; mixed with 1% uniform.
     */
    IMPORTANCE
}
