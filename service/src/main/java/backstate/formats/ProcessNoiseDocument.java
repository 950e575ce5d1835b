package backstate.formats;

import backstate.text.Counted;
import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.databind.annotation.JsonDeserialize;

/**
 * A model's process noise as users write it: exactly one of a full n×n {@code matrix} or a
 * {@code perState} list (the diagonal). For a continuous model it is the spectral density (state
 * unit² per second); for a discrete one the covariance added at every sample period. It must be
 * symmetric positive semi-definite; zeros (noise on some states only) are allowed.
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record ProcessNoiseDocument(@JsonDeserialize(using = MatrixReader.class) double[][] matrix, double[] perState) {
    static final String FIELD = "processNoise";

    /** The n×n matrix; shape and sign errors name the field ({@code processNoise.perState[i]}, …). */
    double[][] toMatrix(int n) {
        if ((matrix == null) == (perState == null)) {
            throw new InputException(FIELD, "got " + (matrix == null ? "neither" : "both") + " of matrix and perState,"
                    + " expected exactly one");
        }
        if (matrix != null) {
            return matrix;
        }
        if (perState.length != n) {
            throw new InputException(FIELD + ".perState", "got " + Counted.of(perState.length, "value") + ", expected " + n
                    + " (one per state)");
        }
        double[][] out = new double[n][n];
        for (int i = 0; i < n; i++) {
            double v = perState[i];
            if (!(v >= 0.0) || Double.isInfinite(v)) {
                throw new InputException(FIELD + ".perState[" + i + "]", "got " + v + ", expected a finite number ≥ 0");
            }
            out[i][i] = v;
        }
        return out;
    }

    /** The field a matrix entry is written at. */
    String fieldOf() {
        return matrix != null ? FIELD + ".matrix" : FIELD + ".perState";
    }

    /** Entries within {@link Limits#MAX_MAGNITUDE}, for a newly published version. */
    void requirePublishable() {
        for (int i = 0; matrix != null && i < matrix.length; i++) {
            for (int j = 0; matrix[i] != null && j < matrix[i].length; j++) {
                Limits.requireMagnitude(FIELD + ".matrix[" + i + "][" + j + "]", matrix[i][j]);
            }
        }
        for (int i = 0; perState != null && i < perState.length; i++) {
            Limits.requireMagnitude(FIELD + ".perState[" + i + "]", perState[i]);
        }
    }
}
