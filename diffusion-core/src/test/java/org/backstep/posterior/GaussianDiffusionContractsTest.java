package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Nested;

/** Runs {@link GaussianDiffusionContract} over every kind of schedule, including T = 1 and alpha-bar_T = 0. */
class GaussianDiffusionContractsTest {

    @Nested
    class LinearThousand extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.linear(1000));
        }
    }

    @Nested
    class CosineThousand extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.cosine(1000));
        }
    }

    @Nested
    class CosineTen extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.cosine(10));
        }
    }

    @Nested
    class StridedLinear extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.linear(1000).strided(20));
        }
    }

    @Nested
    class LastBetaOne extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.binomial(6));
        }
    }

    @Nested
    class SingleStep extends GaussianDiffusionContract {
        @Override
        protected GaussianDiffusion create() {
            return GaussianDiffusion.of(NoiseSchedule.ofBetas(0.3));
        }
    }
}
