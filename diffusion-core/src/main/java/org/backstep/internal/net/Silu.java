package org.backstep.internal.net;

/**
 * The SiLU activation {@code silu(z) = z sigmoid(z)} of Elfwing, Uchibe &amp; Doya, "Sigmoid-weighted
 * linear units for neural network function approximation in reinforcement learning", Neural
 * Networks 107 (2018), section 2, and its derivative
 * {@code silu'(z) = sigmoid(z) (1 + z (1 - sigmoid(z))) = s + a (1 - s)} with {@code s = sigmoid(z)},
 * {@code a = silu(z)}, on plain float arrays so that HotSpot's loop vectorizer turns each loop into
 * AVX code.
 *
 * <p>The sigmoid is {@code 1 / (1 + e)} with {@code e = exp(-z)} by scaling and squaring (Moler &amp;
 * Van Loan, "Nineteen dubious ways to compute the exponential of a matrix, twenty-five years
 * later", SIAM Review 45(1), 2003, section 3): {@code exp(y) = r(y / 16)^16} with the diagonal
 * (5, 5) Pade approximant
 * {@code r(u) = (30240 + 15120u + 3360u^2 + 420u^3 + 30u^4 + u^5) / (same with -u)}, coefficients
 * {@code (10-j)! 5! / (10! j! (5-j)!)} scaled by 30240. It uses only adds, multiplies and one
 * division, which vectorize; {@code Math.exp} does not. {@code z} is clamped to [-20, 20] first (the
 * approximant is only valid on a bounded range); the relative error of the sigmoid is below 1e-5 on
 * that range (checked in the tests) and beyond it the sigmoid is within 2.1e-9 of 0 or 1.
 */
final class Silu {

    /** Inputs are clamped to [-CLAMP, CLAMP] before the exponential. */
    static final float CLAMP = 20f;

    private Silu() {
    }

    /**
     * For each i: {@code s[i] = sigmoid(z[i])}, {@code a[i] = z[i] s[i]}.
     *
     * @param z pre-activations (not modified)
     * @param s receives the sigmoids (modified)
     * @param a receives the activations (modified)
     * @param n number of elements
     */
    static void forward(float[] z, float[] s, float[] a, int n) {
        for (int i = 0; i < n; i++) {
            float x = z[i];
            float u = Math.max(-CLAMP, Math.min(CLAMP, x)) * (-1f / 16f);
            float u2 = u * u;
            float even = 30240f + u2 * (3360f + 30f * u2);
            float odd = u * (15120f + u2 * (420f + u2));
            float e = (even + odd) / (even - odd);
            e = e * e;
            e = e * e;
            e = e * e;
            e = e * e;
            float sg = 1f / (1f + e);
            s[i] = sg;
            a[i] = x * sg;
        }
    }

    /**
     * For each i: {@code d[i] = d[i] (s[i] + a[i] (1 - s[i]))}, the chain rule through SiLU.
     *
     * @param d on entry dLoss/da, on exit dLoss/dz (modified)
     * @param s sigmoids from {@link #forward} (not modified)
     * @param a activations from {@link #forward} (not modified)
     * @param n number of elements
     */
    static void backwardInPlace(float[] d, float[] s, float[] a, int n) {
        for (int i = 0; i < n; i++) {
            float sg = s[i];
            d[i] = d[i] * (sg + a[i] * (1f - sg));
        }
    }
}
