package org.backstep.posterior;

import org.backstep.schedule.NoiseSchedule;
import org.junit.jupiter.api.Nested;

/** Runs {@link BinomialDiffusionContract} over short schedules of every kind. */
class BinomialDiffusionContractsTest {

    @Nested
    class BinomialFive extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            return BinomialDiffusion.of(NoiseSchedule.binomial(5));
        }
    }

    @Nested
    class ExplicitFive extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            return BinomialDiffusion.of(NoiseSchedule.ofBetas(0.1, 0.25, 0.4, 0.6, 0.9));
        }
    }

    @Nested
    class TinyBetas extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            // posteriors near 0 and 1: the log-odds form must keep them exact
            return BinomialDiffusion.of(NoiseSchedule.ofBetas(1e-9, 1e-6, 1e-3, 0.5));
        }
    }

    @Nested
    class CosineSix extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            return BinomialDiffusion.of(NoiseSchedule.cosine(6));
        }
    }

    @Nested
    class StridedBinomial extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            return BinomialDiffusion.of(NoiseSchedule.binomial(40).strided(6));
        }
    }

    @Nested
    class SingleStep extends BinomialDiffusionContract {
        @Override
        protected BinomialDiffusion create() {
            return BinomialDiffusion.of(NoiseSchedule.binomial(1));
        }
    }
}
