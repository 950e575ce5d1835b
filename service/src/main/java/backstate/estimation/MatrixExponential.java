package backstate.estimation;

import org.apache.commons.math3.linear.Array2DRowRealMatrix;
import org.apache.commons.math3.linear.LUDecomposition;

/**
 * The matrix exponential exp(A) of a dense square matrix.
 *
 * <p>Method: scaling and squaring with diagonal Padé approximants r_m, m ∈ {3, 5, 7, 9, 13},
 * N. J. Higham, "The scaling and squaring method for the matrix exponential revisited",
 * SIAM J. Matrix Anal. Appl. 26(4):1179–1193, 2005, Algorithm 2.3. No deviation from that
 * algorithm except that the Padé system is solved by LU with partial pivoting (Commons Math)
 * rather than any particular LAPACK routine.
 *
 * <p>Layout: n×n row-major {@code double[]}, element (i, j) at {@code i * n + j}, as in
 * {@link Matrices}. Work arrays are allocated once per call and reused while squaring.
 *
 * <p>When exp(A) is not representable in double precision (for instance ‖A‖ large with an
 * eigenvalue of real part above ~709), the result holds non-finite entries; callers that need a
 * flag test them with {@link Double#isFinite(double)}.
 */
public final class MatrixExponential {
    /**
     * θ_m of Higham 2005, Table 2.3: the largest ‖A‖₁ for which r_m(A) has relative backward
     * error at most the unit roundoff 2⁻⁵³. Indexed like {@link #DEGREES}.
     */
    static final double[] THETAS = {
        1.495585217958292e-2,
        2.539398330063230e-1,
        9.504178996162932e-1,
        2.097847961257068e0,
        5.371920351148152e0,
    };

    /** Padé degrees tried in order, Higham 2005 Algorithm 2.3. */
    static final int[] DEGREES = {3, 5, 7, 9, 13};

    /**
     * Numerator coefficients b_0..b_m of the [m/m] Padé approximant to e^x, scaled to integers
     * as printed in Higham 2005, Section 2 (b_j ∝ (2m−j)! m! / ((2m)! j! (m−j)!)). All are
     * exactly representable doubles. Indexed like {@link #DEGREES}.
     */
    static final double[][] PADE_COEFFICIENTS = {
        {120, 60, 12, 1},
        {30240, 15120, 3360, 420, 30, 1},
        {17297280, 8648640, 1995840, 277200, 25200, 1512, 56, 1},
        {17643225600.0, 8821612800.0, 2075673600, 302702400, 30270240, 2162160, 110880, 3960, 90, 1},
        {64764752532480000.0, 32382376266240000.0, 7771770303897600.0, 1187353796428800.0,
            129060195264000.0, 10559470521600.0, 670442572800.0, 33522128640.0, 1323241920,
            40840800, 960960, 16380, 182, 1},
    };

    /**
     * Pivot magnitude below which LU declares the Padé denominator q_m(A) singular. For
     * ‖A‖₁ ≤ θ_m, q_m(A) is a small perturbation of b_0·I (Higham 2005, Section 2 bounds its
     * condition number near 1), so its pivots are of order b_0 ≥ 120; this threshold only guards
     * against an exactly zero or subnormal pivot, which would mean a bug rather than a hard input.
     */
    private static final double SINGULAR_PIVOT = Double.MIN_NORMAL;

    private static final int HIGHEST = DEGREES.length - 1;

    private MatrixExponential() {
    }

    /** Degree of the Padé approximant and number of squarings chosen for one input. */
    record Plan(int degree, int squarings) {
    }

    /**
     * Returns exp(A) for a row-major n×n matrix A.
     * Method: Higham 2005 (SIAM J. Matrix Anal. Appl. 26(4):1179–1193), Algorithm 2.3.
     *
     * @throws IllegalArgumentException if n &lt; 1, a has the wrong length, or any entry is not finite
     */
    public static double[] exp(double[] a, int n) {
        LinearSystemArguments.requireAtLeast("n", n, 1);
        LinearSystemArguments.requireMatrix("a", a, n, n);
        return expValidated(a, n);
    }

    /**
     * Returns exp(A t) for a row-major n×n matrix A and a finite scalar t.
     * Method: Higham 2005 (SIAM J. Matrix Anal. Appl. 26(4):1179–1193), Algorithm 2.3, applied to A t.
     *
     * @throws IllegalArgumentException if n &lt; 1, a has the wrong length, or any entry or t is not finite
     */
    public static double[] exp(double[] a, int n, double t) {
        LinearSystemArguments.requireAtLeast("n", n, 1);
        LinearSystemArguments.requireMatrix("a", a, n, n);
        LinearSystemArguments.requireFinite("t", t);
        double[] at = new double[n * n];
        for (int i = 0; i < at.length; i++) {
            at[i] = a[i] * t;
        }
        LinearSystemArguments.requireMatrix("(a*t)", at, n, n);
        return expValidated(at, n);
    }

    /**
     * Returns exp(M t) for a block upper-triangular M = [[X, Y], [0, Z]], X of size k×k, as Van
     * Loan's integrals need it, with Y balanced against the diagonal blocks first. The squaring
     * count of scaling and squaring follows ‖M t‖₁, so a Y far larger than X and Z (an input matrix
     * in small units, a large weight) would square X's block many more times than exp(X t) needs,
     * and its error grows with every squaring. With S = diag(I, βI), exp(S M S⁻¹ t) has the same
     * diagonal blocks and its off-diagonal block divided by β, which is multiplied back; β is a
     * power of two, so the scaling itself is exact. Method: Higham 2005, Algorithm 2.3, on the
     * diagonally scaled block (the balancing is a diagonal similarity; Higham 2008, Functions of
     * Matrices, §10.6 discusses scaling such blocks — from memory).
     *
     * @throws IllegalArgumentException if k is not in 1..size−1, or as {@link #exp(double[], int, double)}
     */
    public static double[] expBlockUpper(double[] m, int size, int k, double t) {
        LinearSystemArguments.requireAtLeast("size", size, 2);
        if (k < 1 || k >= size) {
            throw new IllegalArgumentException("got k " + k + ", expected 1 to " + (size - 1));
        }
        LinearSystemArguments.requireMatrix("m", m, size, size);
        LinearSystemArguments.requireFinite("t", t);
        double diagonal = Math.max(Matrices.norm1(Matrices.block(m, size, 0, 0, k, k), k, k),
                Matrices.norm1(Matrices.block(m, size, k, k, size - k, size - k), size - k, size - k)) * Math.abs(t);
        double offDiagonal = Matrices.norm1(Matrices.block(m, size, 0, k, k, size - k), k, size - k) * Math.abs(t);
        double ratio = offDiagonal / Math.max(diagonal, 1.0);
        int shift = ratio > 1.0 && Double.isFinite(ratio) ? Math.getExponent(ratio) + 1 : 0;
        double[] balanced = m.clone();
        for (int i = 0; i < k; i++) {
            for (int j = k; j < size; j++) {
                balanced[i * size + j] = Math.scalb(balanced[i * size + j], -shift);
            }
        }
        double[] f = exp(balanced, size, t);
        for (int i = 0; i < k; i++) {
            for (int j = k; j < size; j++) {
                f[i * size + j] = Math.scalb(f[i * size + j], shift);
            }
        }
        return f;
    }

    /**
     * Chooses the Padé degree and squaring count from ‖A‖₁ as in Higham 2005, Algorithm 2.3:
     * the lowest m ∈ {3, 5, 7, 9} with ‖A‖₁ ≤ θ_m, else m = 13 with the least s ≥ 0 such that
     * ‖A‖₁ / 2^s ≤ θ_13.
     */
    static Plan plan(double norm1) {
        for (int i = 0; i < HIGHEST; i++) {
            if (norm1 <= THETAS[i]) {
                return new Plan(DEGREES[i], 0);
            }
        }
        double theta = THETAS[HIGHEST];
        int s = Math.max(0, (int) Math.ceil(Math.log(norm1 / theta) / Math.log(2.0)));
        // The logarithm may be off by one ulp; settle s exactly with power-of-two scaling.
        while (Math.scalb(norm1, -s) > theta) {
            s++;
        }
        while (s > 0 && Math.scalb(norm1, -(s - 1)) <= theta) {
            s--;
        }
        return new Plan(DEGREES[HIGHEST], s);
    }

    private static double[] expValidated(double[] a, int n) {
        Plan plan = plan(Matrices.norm1(a, n, n));
        double[] scaled = new double[n * n];
        for (int i = 0; i < scaled.length; i++) {
            scaled[i] = Math.scalb(a[i], -plan.squarings());
        }
        double[] x = plan.degree() == DEGREES[HIGHEST]
                ? pade13(scaled, n)
                : padeLow(scaled, n, plan.degree());
        double[] work = new double[n * n];
        for (int k = 0; k < plan.squarings(); k++) {
            Matrices.multiplyInto(x, x, n, n, n, work);
            double[] swap = x;
            x = work;
            work = swap;
        }
        return x;
    }

    /**
     * r_m(A) for m ∈ {3, 5, 7, 9}: U = A Σ_{j odd} b_j A^{j−1}, V = Σ_{j even} b_j A^j
     * (Higham 2005, Section 2), then (V − U) X = V + U.
     */
    private static double[] padeLow(double[] a, int n, int degree) {
        double[] b = PADE_COEFFICIENTS[indexOf(degree)];
        int half = (degree - 1) / 2;
        double[][] even = new double[half + 1][];
        even[0] = Matrices.identity(n);
        if (half >= 1) {
            even[1] = Matrices.multiply(a, a, n, n, n);
        }
        for (int k = 2; k <= half; k++) {
            even[k] = Matrices.multiply(even[k - 1], even[1], n, n, n);
        }
        double[] odd = new double[n * n];
        double[] v = new double[n * n];
        for (int k = 0; k <= half; k++) {
            addScaled(odd, b[2 * k + 1], even[k]);
            addScaled(v, b[2 * k], even[k]);
        }
        double[] u = Matrices.multiply(a, odd, n, n, n);
        return solvePade(u, v, n);
    }

    /**
     * r_13(A) with the six-product evaluation of Higham 2005, Section 2:
     * U = A[A6(b13 A6 + b11 A4 + b9 A2) + b7 A6 + b5 A4 + b3 A2 + b1 I],
     * V = A6(b12 A6 + b10 A4 + b8 A2) + b6 A6 + b4 A4 + b2 A2 + b0 I.
     */
    private static double[] pade13(double[] a, int n) {
        double[] b = PADE_COEFFICIENTS[HIGHEST];
        double[] a2 = Matrices.multiply(a, a, n, n, n);
        double[] a4 = Matrices.multiply(a2, a2, n, n, n);
        double[] a6 = Matrices.multiply(a4, a2, n, n, n);
        int size = n * n;

        double[] inner = new double[size];
        double[] outer = new double[size];
        for (int i = 0; i < size; i++) {
            inner[i] = b[13] * a6[i] + b[11] * a4[i] + b[9] * a2[i];
            outer[i] = b[7] * a6[i] + b[5] * a4[i] + b[3] * a2[i];
        }
        double[] oddSum = Matrices.multiply(a6, inner, n, n, n);
        for (int i = 0; i < size; i++) {
            oddSum[i] += outer[i];
        }
        addDiagonal(oddSum, n, b[1]);
        double[] u = Matrices.multiply(a, oddSum, n, n, n);

        for (int i = 0; i < size; i++) {
            inner[i] = b[12] * a6[i] + b[10] * a4[i] + b[8] * a2[i];
            outer[i] = b[6] * a6[i] + b[4] * a4[i] + b[2] * a2[i];
        }
        double[] v = Matrices.multiply(a6, inner, n, n, n);
        for (int i = 0; i < size; i++) {
            v[i] += outer[i];
        }
        addDiagonal(v, n, b[0]);
        return solvePade(u, v, n);
    }

    /** Solves (V − U) X = V + U by LU with partial pivoting; no explicit inverse is formed. */
    private static double[] solvePade(double[] u, double[] v, int n) {
        int size = n * n;
        double[] numerator = new double[size];
        double[] denominator = new double[size];
        for (int i = 0; i < size; i++) {
            numerator[i] = v[i] + u[i];
            denominator[i] = v[i] - u[i];
        }
        LUDecomposition lu = new LUDecomposition(
                new Array2DRowRealMatrix(Matrices.unflatten(denominator, n, n), false), SINGULAR_PIVOT);
        double[][] x = lu.getSolver()
                .solve(new Array2DRowRealMatrix(Matrices.unflatten(numerator, n, n), false))
                .getData();
        return Matrices.flatten(x, n, n);
    }

    private static void addScaled(double[] target, double scale, double[] source) {
        for (int i = 0; i < target.length; i++) {
            target[i] += scale * source[i];
        }
    }

    private static void addDiagonal(double[] target, int n, double value) {
        for (int i = 0; i < n; i++) {
            target[i * n + i] += value;
        }
    }

    private static int indexOf(int degree) {
        for (int i = 0; i < DEGREES.length; i++) {
            if (DEGREES[i] == degree) {
                return i;
            }
        }
        throw new IllegalStateException("degree: got " + degree + ", expected one of 3, 5, 7, 9, 13");
    }
}
