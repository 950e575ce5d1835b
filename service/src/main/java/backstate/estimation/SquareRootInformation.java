package backstate.estimation;

import java.util.Arrays;

/**
 * Sequential least squares in square-root information form: an upper-triangular factor R and a
 * vector z with RᵀR = Σ aᵢaᵢᵀ and Rᵀz = Σ aᵢbᵢ over all equations seen, updated block by block
 * with Householder reflections so the stacked N×q matrix is never held (Lawson &amp; Hanson 1974,
 * Solving Least Squares Problems, ch. 27, sequential accumulation).
 *
 * <p>Layout: [R | z] is row-major q×(q+1); pending equations sit in a column-major block of
 * {@link #BLOCK_ROWS} rows so each reflection's inner loop runs over contiguous memory. Memory is
 * O(q² + block) whatever the number of equations. The residual sum of squares of eliminated
 * equations is accumulated as they are folded in.
 */
final class SquareRootInformation {
    /** Rows folded in per Householder sweep: large enough to amortise the sweep over R, small enough to stay in L1/L2 cache. */
    static final int BLOCK_ROWS = 256;

    private final int q;
    private final int width;
    private final double[] factor;
    private final double[] block;
    private int pending;
    private long equations;
    private double residualSquares;

    SquareRootInformation(int unknowns) {
        this.q = unknowns;
        this.width = unknowns + 1;
        this.factor = new double[q * width];
        this.block = new double[width * BLOCK_ROWS];
    }

    private SquareRootInformation(SquareRootInformation other) {
        this.q = other.q;
        this.width = other.width;
        this.factor = other.factor.clone();
        this.block = new double[width * BLOCK_ROWS];
        this.equations = other.equations;
        this.residualSquares = other.residualSquares;
    }

    /** An independent copy with every pending equation folded in. */
    SquareRootInformation copy() {
        flush();
        return new SquareRootInformation(this);
    }

    int unknowns() {
        return q;
    }

    /** Adds the weighted equation row·θ ≈ rhs; row has q entries and is copied. */
    void add(double[] row, double rhs) {
        for (int c = 0; c < q; c++) {
            block[c * BLOCK_ROWS + pending] = row[c];
        }
        block[q * BLOCK_ROWS + pending] = rhs;
        pending++;
        equations++;
        if (pending == BLOCK_ROWS) {
            flush();
        }
    }

    /**
     * Adds a block of equations already reduced by an orthogonal transformation: the q rows
     * (row-major, count×q) and right-hand sides that carry the block's information, the number of
     * original equations they stand for, and the residual squares the reduction split off.
     */
    void addReduced(double[] rows, double[] rhs, int count, long represented, double splitResidualSquares) {
        for (int r = 0; r < count; r++) {
            for (int c = 0; c < q; c++) {
                block[c * BLOCK_ROWS + pending] = rows[r * q + c];
            }
            block[q * BLOCK_ROWS + pending] = rhs[r];
            pending++;
            if (pending == BLOCK_ROWS) {
                flush();
            }
        }
        equations += represented;
        residualSquares += splitResidualSquares;
    }

    /** Number of equations added so far. */
    long equations() {
        return equations;
    }

    /**
     * Sum of squared residuals of the least-squares fit over all equations (valid when R has full
     * rank); NaN once a reduced block came without its split residual ({@link #addReduced} with NaN).
     */
    double residualSquares() {
        flush();
        return residualSquares;
    }

    /** The factor R, q×q row-major upper triangular (a copy). */
    double[] factorR() {
        flush();
        double[] r = new double[q * q];
        for (int i = 0; i < q; i++) {
            System.arraycopy(factor, i * width, r, i * q, q);
        }
        return r;
    }

    /** The transformed right-hand side z (a copy). */
    double[] rhs() {
        flush();
        double[] z = new double[q];
        for (int i = 0; i < q; i++) {
            z[i] = factor[i * width + q];
        }
        return z;
    }

    /** Folds the pending block into [R | z] by one Householder reflection per column. */
    void flush() {
        if (pending == 0) {
            return;
        }
        for (int j = 0; j < q; j++) {
            reflectColumn(j);
        }
        int rhsColumn = q * BLOCK_ROWS;
        for (int i = 0; i < pending; i++) {
            double r = block[rhsColumn + i];
            residualSquares += r * r;
        }
        Arrays.fill(block, 0.0);
        pending = 0;
    }

    /** Zeroes column j of the block against R[j][j] and applies the reflection to columns j+1..q. */
    private void reflectColumn(int j) {
        int col = j * BLOCK_ROWS;
        double below = 0.0;
        for (int i = 0; i < pending; i++) {
            below += block[col + i] * block[col + i];
        }
        if (below == 0.0) {
            return;
        }
        double head = factor[j * width + j];
        double alpha = -Math.copySign(Math.sqrt(head * head + below), head);
        double v0 = head - alpha;
        double beta = 1.0 / (alpha * v0);
        for (int c = j + 1; c < width; c++) {
            int other = c * BLOCK_ROWS;
            double s = v0 * factor[j * width + c];
            for (int i = 0; i < pending; i++) {
                s += block[col + i] * block[other + i];
            }
            s *= beta;
            factor[j * width + c] += s * v0;
            for (int i = 0; i < pending; i++) {
                block[other + i] += s * block[col + i];
            }
        }
        factor[j * width + j] = alpha;
        for (int i = 0; i < pending; i++) {
            block[col + i] = 0.0;
        }
    }
}
