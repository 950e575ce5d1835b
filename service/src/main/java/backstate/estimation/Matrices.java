package backstate.estimation;

/**
 * Small dense matrix kernels over row-major {@code double[]} arrays.
 *
 * <p>Layout: element (i, j) of an r×c matrix sits at {@code i * c + j}. Row-major matches the
 * way the estimator walks one output row at a time, so inner loops run over contiguous memory.
 * Every method checks nothing: callers validate shapes once at the boundary.
 */
public final class Matrices {
    private Matrices() {
    }

    /** Returns the n×n identity. */
    /** Whether every entry is a finite number (no NaN, no infinity). */
    public static boolean allFinite(double[] a) {
        for (double v : a) {
            if (!Double.isFinite(v)) {
                return false;
            }
        }
        return true;
    }

    public static double[] identity(int n) {
        double[] out = new double[n * n];
        for (int i = 0; i < n; i++) {
            out[i * n + i] = 1.0;
        }
        return out;
    }

    /** Returns a (r×k) times b (k×c) as a new r×c array; plain triple loop in i-k-j order. */
    public static double[] multiply(double[] a, double[] b, int r, int k, int c) {
        double[] out = new double[r * c];
        multiplyInto(a, b, r, k, c, out);
        return out;
    }

    /** Writes a (r×k) times b (k×c) into out (r×c), which must not alias a or b. */
    public static void multiplyInto(double[] a, double[] b, int r, int k, int c, double[] out) {
        java.util.Arrays.fill(out, 0, r * c, 0.0);
        for (int i = 0; i < r; i++) {
            int rowOut = i * c;
            for (int l = 0; l < k; l++) {
                double ail = a[i * k + l];
                if (ail == 0.0) {
                    continue;
                }
                int rowB = l * c;
                for (int j = 0; j < c; j++) {
                    out[rowOut + j] += ail * b[rowB + j];
                }
            }
        }
    }

    /**
     * Writes a (r×c) times vector x (c) into y (r); y must not alias x. Rows go four at a time, then
     * two, then one (register blocking, Golub &amp; Van Loan 2013, §1.5.4): four independent sums share each load of
     * x[j], where one row at a time waits on every add before the next. Each row is still summed
     * from j = 0 up, so the result is bit for bit the plain row-by-row product.
     */
    public static void multiplyVector(double[] a, double[] x, int r, int c, double[] y) {
        multiplyVector(a, x, 0, r, c, y);
    }

    /** As {@link #multiplyVector(double[], double[], int, int, double[])} with the vector at x[from … from+c−1]. */
    public static void multiplyVector(double[] a, double[] x, int from, int r, int c, double[] y) {
        int i = 0;
        for (; i + 3 < r; i += 4) {
            int row0 = i * c;
            int row1 = row0 + c;
            int row2 = row1 + c;
            int row3 = row2 + c;
            double s0 = 0.0;
            double s1 = 0.0;
            double s2 = 0.0;
            double s3 = 0.0;
            for (int j = 0; j < c; j++) {
                double xj = x[from + j];
                s0 += a[row0 + j] * xj;
                s1 += a[row1 + j] * xj;
                s2 += a[row2 + j] * xj;
                s3 += a[row3 + j] * xj;
            }
            y[i] = s0;
            y[i + 1] = s1;
            y[i + 2] = s2;
            y[i + 3] = s3;
        }
        if (i + 1 < r) {
            int row0 = i * c;
            int row1 = row0 + c;
            double s0 = 0.0;
            double s1 = 0.0;
            for (int j = 0; j < c; j++) {
                double xj = x[from + j];
                s0 += a[row0 + j] * xj;
                s1 += a[row1 + j] * xj;
            }
            y[i] = s0;
            y[i + 1] = s1;
            i += 2;
        }
        if (i < r) {
            double sum = 0.0;
            int row = i * c;
            for (int j = 0; j < c; j++) {
                sum += a[row + j] * x[from + j];
            }
            y[i] = sum;
        }
    }

    /**
     * Σ_{i<length} a[aFrom + i]·b[bFrom + i] in four interleaved partial sums added at the end: four
     * independent chains of adds instead of one (the pairwise-style splitting of Higham 2002,
     * Accuracy and Stability of Numerical Algorithms, §4.2, with the same error bound as one sum).
     */
    public static double dot(double[] a, int aFrom, double[] b, int bFrom, int length) {
        double s0 = 0.0;
        double s1 = 0.0;
        double s2 = 0.0;
        double s3 = 0.0;
        int i = 0;
        for (; i + 3 < length; i += 4) {
            s0 += a[aFrom + i] * b[bFrom + i];
            s1 += a[aFrom + i + 1] * b[bFrom + i + 1];
            s2 += a[aFrom + i + 2] * b[bFrom + i + 2];
            s3 += a[aFrom + i + 3] * b[bFrom + i + 3];
        }
        for (; i < length; i++) {
            s0 += a[aFrom + i] * b[bFrom + i];
        }
        return (s0 + s1) + (s2 + s3);
    }

    /** Returns the transpose of an r×c matrix. */
    public static double[] transpose(double[] a, int r, int c) {
        double[] out = new double[r * c];
        for (int i = 0; i < r; i++) {
            for (int j = 0; j < c; j++) {
                out[j * r + i] = a[i * c + j];
            }
        }
        return out;
    }

    /** Returns the max-column-sum (1-)norm of an r×c matrix. */
    public static double norm1(double[] a, int r, int c) {
        double best = 0.0;
        for (int j = 0; j < c; j++) {
            double sum = 0.0;
            for (int i = 0; i < r; i++) {
                sum += Math.abs(a[i * c + j]);
            }
            best = Math.max(best, sum);
        }
        return best;
    }

    /** Copies a rectangular {@code double[][]} into a new row-major array. */
    public static double[] flatten(double[][] rows, int r, int c) {
        double[] out = new double[r * c];
        for (int i = 0; i < r; i++) {
            System.arraycopy(rows[i], 0, out, i * c, c);
        }
        return out;
    }

    /** Copies a row-major r×c array into a new {@code double[][]}. */
    public static double[][] unflatten(double[] a, int r, int c) {
        double[][] out = new double[r][c];
        for (int i = 0; i < r; i++) {
            System.arraycopy(a, i * c, out[i], 0, c);
        }
        return out;
    }

    /** Returns [a | b] for r×ca a and r×cb b, row-major (r×(ca+cb)). */
    public static double[] sideBySide(double[] a, double[] b, int r, int ca, int cb) {
        double[] out = new double[r * (ca + cb)];
        copyBlock(a, ca, r, ca, out, ca + cb, 0, 0);
        copyBlock(b, cb, r, cb, out, ca + cb, 0, ca);
        return out;
    }

    /** Copies block src (rows×cols, row-major with stride srcCols) into dst at (row0, col0) with stride dstCols. */
    public static void copyBlock(double[] src, int srcCols, int rows, int cols,
                                 double[] dst, int dstCols, int row0, int col0) {
        for (int i = 0; i < rows; i++) {
            System.arraycopy(src, i * srcCols, dst, (row0 + i) * dstCols + col0, cols);
        }
    }

    /** Returns block (row0, col0, rows×cols) of a row-major matrix with srcCols columns. */
    public static double[] block(double[] src, int srcCols, int row0, int col0, int rows, int cols) {
        double[] out = new double[rows * cols];
        for (int i = 0; i < rows; i++) {
            System.arraycopy(src, (row0 + i) * srcCols + col0, out, i * cols, cols);
        }
        return out;
    }
}
