package backstate.formats;

/**
 * 10^0 … 10^{@value #MAX} as doubles, each exact: 10^e = 5^e·2^e, and 5^e fits the 53-bit
 * significand while e ≤ 22 (5^22 ≈ 2.4·10^15 < 2^53 ≈ 9.0·10^15 < 5^23 ≈ 1.2·10^16; worked out, no
 * source). With an integer below 2^53, one IEEE division or multiplication by such a power is the
 * correctly rounded decimal value (Clinger 1990's exact case, from memory).
 */
final class ExactPowersOfTen {
    /** The largest exponent whose power of ten is an exact double. */
    static final int MAX = 22;
    private static final double[] POWERS = new double[MAX + 1];

    static {
        double p = 1.0;
        for (int i = 0; i <= MAX; i++) {
            POWERS[i] = p;
            p *= 10.0;
        }
    }

    private ExactPowersOfTen() {
    }

    /** 10^exponent, for exponent in 0..{@value #MAX}. */
    static double of(int exponent) {
        return POWERS[exponent];
    }
}
