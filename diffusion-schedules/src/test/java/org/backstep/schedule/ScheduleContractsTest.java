package org.backstep.schedule;

import org.junit.jupiter.api.Nested;

/** Runs {@link NoiseScheduleContract} against every way of making a schedule. */
class ScheduleContractsTest {

    @Nested
    class LinearThousand extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.linear(1000);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.linear(1);
        }
    }

    @Nested
    class LinearFifty extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.linear(50);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.linear(1, 0.3, 0.3);
        }
    }

    @Nested
    class CosineThousand extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.cosine(1000);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.cosine(1);
        }
    }

    @Nested
    class CosineSeven extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.cosine(7);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.cosine(1, 0.5);
        }
    }

    @Nested
    class BinomialFive extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.binomial(5);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.binomial(1);
        }
    }

    @Nested
    class BinomialThousand extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.binomial(1000);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.binomial(1);
        }
    }

    @Nested
    class ExplicitBetas extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            // not monotone on purpose, with a very small and a large beta
            return NoiseSchedule.ofBetas(0.05, 0.3, 1e-6, 0.7, 0.2, 0.999, 0.01, 0.5, 0.02, 0.9, 0.4, 0.6);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.ofBetas(0.37);
        }
    }

    @Nested
    class StridedCosine extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.cosine(1000).strided(50);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.cosine(1000).strided(1);
        }
    }

    @Nested
    class SubsetOfLinear extends NoiseScheduleContract {
        @Override
        protected NoiseSchedule create() {
            return NoiseSchedule.linear(1000).subset(1, 2, 10, 100, 400, 401, 999, 1000);
        }

        @Override
        protected NoiseSchedule createSmallest() {
            return NoiseSchedule.linear(1000).subset(250);
        }
    }
}
