package backstate.estimation;

/**
 * Argument checks shared by the transition-matrix and Gramian routines.
 *
 * <p>Each check throws {@link IllegalArgumentException} with a message of the form
 * "name: got X, expected Y" before any numerical work starts.
 */
final class LinearSystemArguments {
    private LinearSystemArguments() {
    }

    /** Requires {@code value >= min}. */
    static void requireAtLeast(String name, int value, int min) {
        if (value < min) {
            throw new IllegalArgumentException(name + ": got " + value + ", expected at least " + min);
        }
    }

    /** Requires a finite, strictly positive scalar. */
    static void requirePositive(String name, double value) {
        if (!(Double.isFinite(value) && value > 0.0)) {
            throw new IllegalArgumentException(name + ": got " + value + ", expected a finite value > 0");
        }
    }

    /** Requires a finite scalar. */
    static void requireFinite(String name, double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException(name + ": got " + value + ", expected a finite value");
        }
    }

    /** Requires a non-null rows×cols row-major matrix whose entries are all finite. */
    static void requireMatrix(String name, double[] values, int rows, int cols) {
        long expected = (long) rows * cols;
        if (values == null) {
            throw new IllegalArgumentException(name + ": got null, expected " + rows + "x" + cols
                    + " row-major array of length " + expected);
        }
        if (values.length != expected) {
            throw new IllegalArgumentException(name + ": got length " + values.length + ", expected "
                    + rows + "x" + cols + " = " + expected);
        }
        for (int i = 0; i < values.length; i++) {
            if (!Double.isFinite(values[i])) {
                throw new IllegalArgumentException(name + "[" + i / cols + "][" + i % cols + "]: got "
                        + values[i] + ", expected a finite value");
            }
        }
    }

    /**
     * Requires an n×m input matrix; when m is 0 the array may be null or empty.
     * Returns a non-null array (empty when m is 0).
     */
    static double[] requireInputMatrix(String name, double[] values, int n, int m) {
        if (m == 0 && (values == null || values.length == 0)) {
            return new double[0];
        }
        requireMatrix(name, values, n, m);
        return values;
    }
}
