package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Nested;

/** Runs {@link CategoricalDiffusionContract} for K = 2, 3, 4 over short schedules of every kind. */
class CategoricalDiffusionContractsTest {

    @Nested
    class TwoOverBinomialFour extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.binomial(4), 2);
        }
    }

    @Nested
    class TwoOverCosineFour extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.cosine(4), 2);
        }
    }

    @Nested
    class ThreeOverExplicitThree extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.ofBetas(0.1, 0.3, 0.6), 3);
        }
    }

    @Nested
    class ThreeOverTinyBetas extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            // posteriors near 0 and 1: the log-space form must keep them exact
            return CategoricalDiffusion.of(NoiseSchedule.ofBetas(1e-9, 1e-6, 1e-3, 0.5), 3);
        }
    }

    @Nested
    class ThreeOverStridedBinomial extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.binomial(40).strided(4), 3);
        }
    }

    @Nested
    class ThreeOverOneStep extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.binomial(1), 3);
        }
    }

    @Nested
    class FourOverBinomialFour extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.binomial(4), 4);
        }
    }

    @Nested
    class FourOverCosineThree extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.cosine(3), 4);
        }
    }

    @Nested
    class FourOverLinearTwo extends CategoricalDiffusionContract {
        @Override
        protected CategoricalDiffusion create() {
            return CategoricalDiffusion.of(NoiseSchedule.linear(2), 4);
        }
    }
}
