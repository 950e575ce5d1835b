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

    /** Writes a (r×c) times vector x (c) into y (r); y must not alias x. */
    public static void multiplyVector(double[] a, double[] x, int r, int c, double[] y) {
        for (int i = 0; i < r; i++) {
            double sum = 0.0;
            int row = i * c;
            for (int j = 0; j < c; j++) {
                sum += a[row + j] * x[j];
            }
            y[i] = sum;
        }
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
