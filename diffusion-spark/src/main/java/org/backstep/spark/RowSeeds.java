package org.backstep.spark;

import java.nio.charset.StandardCharsets;

/**
 * The seed of one row's random stream, from the job's seed and a stable key of the row: a key
 * column's value, or the row's cells. A row's score, imputation or denoising then depends only on
 * the job's seed, the row's key and its cells: not on the partitioning, the order of rows, or
 * which other rows are in the DataFrame. To reproduce a row in one JVM, call the core's job on a
 * one-row table with the seed this class gives, e.g.
 * {@code model.bound(oneRowTable, RowSeeds.ofKey(seed, 17L))} (a score, imputation or denoising
 * computed in a batch agrees with it to the float32 network's rounding; a flagged row's surprisal
 * to the last bit). Row i of a synthetic sample draws from {@code ofKey(seed, i)}.
 *
 * <p>Formulas: the key's 64-bit hash h is the key itself for integer keys, and FNV-1a 64 (Fowler,
 * Noll, Vo; offset basis 0xcbf29ce484222325, prime 0x100000001b3) over the UTF-8 bytes of a string
 * key or over the little-endian bytes of each cell's {@link Double#doubleToLongBits} (every NaN
 * alike). The row's seed is {@code mix(seed + G (1 + mix(h)))} with G = 0x9E3779B97F4A7C15 and
 * {@code mix} the SplitMix64 finalizer (Steele, Lea, Flood 2014); {@code mix} is a bijection and G
 * odd, so for one job seed distinct hashes give distinct row seeds (common practice).
 */
public final class RowSeeds {

    private static final long GOLDEN = 0x9E3779B97F4A7C15L;
    private static final long FNV_OFFSET = 0xcbf29ce484222325L;
    private static final long FNV_PRIME = 0x100000001b3L;

    private RowSeeds() {
    }

    /**
     * @param seed the job's seed
     * @param key an integer row key (int, short and byte keys widen to long and give the same seed)
     * @return the row's seed
     */
    public static long ofKey(long seed, long key) {
        return fromHash(seed, key);
    }

    /**
     * @param seed the job's seed
     * @param key a string row key, not null
     * @return the row's seed
     */
    public static long ofKey(long seed, String key) {
        long h = FNV_OFFSET;
        for (byte b : key.getBytes(StandardCharsets.UTF_8)) {
            h = (h ^ (b & 0xff)) * FNV_PRIME;
        }
        return fromHash(seed, h);
    }

    /**
     * @param seed the job's seed
     * @param cells the row's cells in the model's column order (NaN for a missing cell); not modified
     * @return the row's seed
     */
    public static long ofContent(long seed, double[] cells) {
        long h = FNV_OFFSET;
        for (double c : cells) {
            long bits = Double.doubleToLongBits(c);
            for (int i = 0; i < 8; i++) {
                h = (h ^ ((bits >>> (8 * i)) & 0xff)) * FNV_PRIME;
            }
        }
        return fromHash(seed, h);
    }

    private static long fromHash(long seed, long h) {
        return mix(seed + GOLDEN * (1 + mix(h)));
    }

    /** The SplitMix64 finalizer (Steele, Lea, Flood 2014). */
    static long mix(long z) {
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return z ^ (z >>> 31);
    }
}
