package backstate.estimation;

/** Conditions a dashboard can filter estimates on. */
public enum Flag {
    /** The data alone leave a direction undetermined; only the prior fixes it. */
    UNOBSERVABLE,
    /** The information matrix condition number exceeds {@link Conditioning#ILL_CONDITIONED_LIMIT}. */
    ILL_CONDITIONED,
    /** The χ² test (with given σ) or a channel's whiteness test rejects at the options' level. */
    MODEL_MISMATCH,
    /** Fewer degrees of freedom than {@link Conditioning#FEW_SAMPLES_DOF}. */
    FEW_SAMPLES,
    /**
     * A sensor offset cannot be told apart from the states: its variance inflation factor exceeds
     * {@link Conditioning#OFFSET_INFLATION_LIMIT} (see {@link OffsetSeparation}).
     */
    OFFSET_CONFOUNDED
}
