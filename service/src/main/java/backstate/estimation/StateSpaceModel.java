package backstate.estimation;

/**
 * A linear time-invariant state-space model, continuous ({@code dx/dt = A x + B u}) or discrete
 * ({@code x[k+1] = A x[k] + B u[k]} with a sample period), observed through {@code y = C x + D u}.
 *
 * <p>Matrices are held row-major in {@code double[]} (see {@link Matrices}); B and D are empty
 * arrays when the model has no inputs. Instances are immutable and validated on construction.
 */
public final class StateSpaceModel {
    /** Default size limits; large enough for fleet models, small enough to bound a solve's memory. */
    public static final int MAX_STATES = 64;
    public static final int MAX_OUTPUTS = 32;
    public static final int MAX_INPUTS = 32;

    private final int states;
    private final int outputs;
    private final int inputs;
    private final double[] a;
    private final double[] b;
    private final double[] c;
    private final double[] d;
    private final double samplePeriod;
    private final double[] defaultNoiseSigma;
    /** Process-noise spectral density (continuous) or covariance per period (discrete), n×n; null when none. */
    private final double[] processNoise;

    private StateSpaceModel(StateSpaceModel model, double[] processNoise) {
        this.states = model.states;
        this.outputs = model.outputs;
        this.inputs = model.inputs;
        this.a = model.a;
        this.b = model.b;
        this.c = model.c;
        this.d = model.d;
        this.samplePeriod = model.samplePeriod;
        this.defaultNoiseSigma = model.defaultNoiseSigma;
        this.processNoise = processNoise;
    }

    private StateSpaceModel(double[][] a, double[][] b, double[][] c, double[][] d,
                            double samplePeriod, double[] defaultNoiseSigma) {
        ModelShapeCheck check = new ModelShapeCheck(a, b, c, d, MAX_STATES, MAX_OUTPUTS, MAX_INPUTS);
        this.states = check.states();
        this.outputs = check.outputs();
        this.inputs = check.inputs();
        this.a = Matrices.flatten(a, states, states);
        this.b = inputs == 0 ? new double[0] : Matrices.flatten(b, states, inputs);
        this.c = Matrices.flatten(c, outputs, states);
        this.d = d == null || inputs == 0 ? new double[outputs * inputs] : Matrices.flatten(d, outputs, inputs);
        this.samplePeriod = samplePeriod;
        this.defaultNoiseSigma = defaultNoiseSigma == null ? null : defaultNoiseSigma.clone();
        this.processNoise = null;
        check.requireNoiseSigma("noiseSigma", defaultNoiseSigma);
    }

    /** A continuous-time model; b and d may be null (no inputs), noise σ per output may be null. */
    public static StateSpaceModel continuous(double[][] a, double[][] b, double[][] c, double[][] d,
                                             double[] defaultNoiseSigma) {
        return new StateSpaceModel(a, b, c, d, 0.0, defaultNoiseSigma);
    }

    /** A discrete-time model with the given sample period in seconds (finite, &gt; 0). */
    public static StateSpaceModel discrete(double[][] a, double[][] b, double[][] c, double[][] d,
                                           double samplePeriod, double[] defaultNoiseSigma) {
        if (!(samplePeriod > 0.0) || !Double.isFinite(samplePeriod)) {
            throw new ModelException("samplePeriod", "got " + samplePeriod + ", expected a finite number > 0");
        }
        return new StateSpaceModel(a, b, c, d, samplePeriod, defaultNoiseSigma);
    }

    public int states() {
        return states;
    }

    public int outputs() {
        return outputs;
    }

    public int inputs() {
        return inputs;
    }

    public boolean isDiscrete() {
        return samplePeriod > 0.0;
    }

    /** Sample period in seconds for a discrete model, 0 for a continuous one. */
    public double samplePeriod() {
        return samplePeriod;
    }

    /** A, n×n row-major (a copy). */
    public double[] a() {
        return a.clone();
    }

    /** B, n×m row-major (a copy; empty without inputs). */
    public double[] b() {
        return b.clone();
    }

    /** C, p×n row-major (a copy). */
    public double[] c() {
        return c.clone();
    }

    /** D, p×m row-major (a copy; empty without inputs). */
    public double[] d() {
        return d.clone();
    }

    /** Default noise standard deviation per output, or null when the model gives none. */
    public double[] defaultNoiseSigma() {
        return defaultNoiseSigma == null ? null : defaultNoiseSigma.clone();
    }

    /**
     * This model with process noise: for a continuous model the spectral density Q_c (state²/s),
     * for a discrete one the covariance added per sample period; n×n, symmetric positive
     * semi-definite ({@link ProcessNoiseCheck}). Used by {@link Formulation#PROCESS_NOISE}.
     */
    public StateSpaceModel withProcessNoise(double[][] q) {
        return withProcessNoise(q, "processNoise");
    }

    /** As {@link #withProcessNoise(double[][])}, naming {@code field} (and its entries) in a {@link ModelException}. */
    public StateSpaceModel withProcessNoise(double[][] q, String field) {
        return new StateSpaceModel(this, ProcessNoiseCheck.validated(q, states, field));
    }

    /** The process noise, n×n row-major (a copy), or null when the model declares none. */
    public double[] processNoise() {
        return processNoise == null ? null : processNoise.clone();
    }
}
