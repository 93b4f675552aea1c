package org.backstep.internal.net;

/**
 * The SplitMix64 generator of Steele, Lea &amp; Flood, "Fast splittable pseudorandom number
 * generators", OOPSLA 2014 (the {@code nextSeed} / {@code mix64} pair with the golden-gamma
 * increment 0x9E3779B97F4A7C15). Written out here, not taken from the JDK, so that the stream for a
 * seed can never change between Java versions: network initialization must be bit-reproducible.
 */
final class SplitMix64 {

    private long state;

    SplitMix64(long seed) {
        this.state = seed;
    }

    /** The next 64 random bits: {@code z = state += gamma}, then the variant-13 finalizer of the paper. */
    long nextLong() {
        long z = (state += 0x9E3779B97F4A7C15L);
        z = (z ^ (z >>> 30)) * 0xBF58476D1CE4E5B9L;
        z = (z ^ (z >>> 27)) * 0x94D049BB133111EBL;
        return z ^ (z >>> 31);
    }

    /** A double uniform on [0, 1): the top 53 bits times 2^-53. */
    double nextDouble() {
        return (nextLong() >>> 11) * 0x1.0p-53;
    }
}
