package org.backstep.option;

import org.backstep.schedule.NoiseSchedule;

/** The families of noise schedule the builder can make for a given T. */
public enum ScheduleFamily {
    /** {@link NoiseSchedule#linear(int)}: Ho et al. 2020, rescaled by 1000/T. */
    LINEAR,
    /** {@link NoiseSchedule#cosine(int)}: Nichol &amp; Dhariwal 2021, eq. 17. */
    COSINE,
    /** {@link NoiseSchedule#binomial(int)}: Sohl-Dickstein et al. 2015, beta_t = 1/(T - t + 1). */
    BINOMIAL;

    /**
     * @param steps T
     * @return this family's schedule over T steps
     */
    public NoiseSchedule schedule(int steps) {
        return switch (this) {
            case LINEAR -> NoiseSchedule.linear(steps);
            case COSINE -> NoiseSchedule.cosine(steps);
            case BINOMIAL -> NoiseSchedule.binomial(steps);
        };
    }
}
