package org.backstep.internal.chain;

import org.backstep.option.Conditioning;
import org.backstep.option.SamplerKind;

/**
 * Draws of the unknown cells of model-space rows given their known cells, on a chain: each row
 * starts from the prior, its known cells diffused to the first step, and runs the reverse chain
 * down to x_0 with the known cells held (see {@link ReverseRun}); the rows a job wants several
 * draws of are simply repeated. The same loop as {@link Imputer}'s, for callers that work in model
 * space (the surprisal estimate).
 */
public final class ConditionalDraws {

    private ConditionalDraws() {
    }

    /**
     * @param chain the chain to run (full or strided)
     * @param known rows x D model-space values, NaN where a cell is to be drawn; not modified
     * @param rows the number of rows
     * @param rounds resampling rounds per step, at least 1
     * @param method how the known cells are held
     * @param seed the seed (chunk c draws from {@link Parallel#random(long, long)} of the seed and c)
     * @param threads worker threads
     * @return rows x D: the known cells as given, the others drawn
     * @throws IllegalStateException if the chain diverges (a cell leaves the float range)
     */
    public static float[] draw(Chain chain, float[] known, int rows, int rounds, Conditioning method, long seed,
                               int threads) {
        return Parallel.fillChunks(rows, chain.d, threads, seed, (from, m, rng, x) -> {
            float[] kn = BoundEvaluator.slice(known, from, m, chain.d);
            chain.drawPrior(x, m, rng);
            ReverseRun.replaceKnown(chain, x, kn, m, chain.steps, rng);
            ReverseRun.run(chain, x, m, chain.steps, kn, rounds, SamplerKind.ANCESTRAL, 0.0, method, rng);
        });
    }
}
