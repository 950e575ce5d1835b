package backstate.regression;

import backstate.formats.InputException;

/**
 * When a candidate version fails a regression run. A compared unit is "worse beyond tolerance"
 * when its pooled χ²/dof rises by more than {@code maxChi2PerDofIncrease}, when the candidate
 * cannot solve a trace the baseline solved, or (only if {@code maxX0ShiftSe} is set) when some
 * state of x̂0 moves by more than {@code maxX0ShiftSe} combined standard errors. The run fails
 * when the share of compared units worse beyond tolerance exceeds {@code maxWorseShare}.
 *
 * @param maxChi2PerDofIncrease largest allowed rise of a unit's χ²/dof (absolute, ≥ 0)
 * @param maxWorseShare         largest allowed share of compared units worse beyond tolerance, in [0, 1]
 * @param maxX0ShiftSe          largest allowed |Δx̂0| in combined standard errors, or null: reported, not judged
 */
public record Tolerances(Double maxChi2PerDofIncrease, Double maxWorseShare, Double maxX0ShiftSe) {

    /**
     * For a correct model χ²/dof has standard deviation √(2/dof): 0.053 on a 6-h trace of two
     * channels at 60 s (dof ≈ 718). A rise of 0.1 is about two of those, so the default notices a
     * real loss of fit on traces of that length. Short traces scatter more (√(2/8) = 0.5 at 8
     * degrees of freedom); raise the tolerance for them.
     */
    public static final double DEFAULT_MAX_CHI2_PER_DOF_INCREASE = 0.1;
    /** A CI gate lets no unit get worse beyond tolerance unless the caller says how many may. */
    public static final double DEFAULT_MAX_WORSE_SHARE = 0.0;

    /** The given tolerances with defaults filled in; a value out of range throws naming its field. */
    public static Tolerances resolve(Tolerances givenOrNull) {
        Tolerances given = givenOrNull == null ? new Tolerances(null, null, null) : givenOrNull;
        double chi2 = given.maxChi2PerDofIncrease == null ? DEFAULT_MAX_CHI2_PER_DOF_INCREASE
                : atLeastZero("tolerances.maxChi2PerDofIncrease", given.maxChi2PerDofIncrease);
        double share = given.maxWorseShare == null ? DEFAULT_MAX_WORSE_SHARE
                : atLeastZero("tolerances.maxWorseShare", given.maxWorseShare);
        if (share > 1.0) {
            throw new InputException("tolerances.maxWorseShare", "got " + share + ", expected a share in [0, 1]");
        }
        Double shift = given.maxX0ShiftSe == null ? null
                : atLeastZero("tolerances.maxX0ShiftSe", given.maxX0ShiftSe);
        return new Tolerances(chi2, share, shift);
    }

    private static double atLeastZero(String field, double value) {
        if (!Double.isFinite(value) || value < 0.0) {
            throw new InputException(field, "got " + value + ", expected a finite number >= 0");
        }
        return value;
    }
}
