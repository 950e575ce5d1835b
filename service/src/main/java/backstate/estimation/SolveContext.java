package backstate.estimation;

import java.util.ArrayList;
import java.util.List;

/** What both passes over a trace share: model arrays, unknown layout, noise levels and step matrices. */
final class SolveContext {
    final StateSpaceModel model;
    final Trace trace;
    final EstimationOptions options;
    final int n;
    final int p;
    final int m;
    final int q;
    final double[] c;
    final double[] d;
    final NoiseLevels noise;
    final SampleSteps steps;
    final TransitionCache transitions;

    SolveContext(StateSpaceModel model, Trace trace, EstimationOptions options) {
        this.model = model;
        this.trace = trace;
        this.options = options;
        this.n = model.states();
        this.p = model.outputs();
        this.m = model.inputs();
        this.q = n + (options.estimateOffsets() ? p : 0);
        this.c = model.c();
        this.d = model.d();
        this.noise = new NoiseLevels(model, trace);
        this.steps = new SampleSteps(model, trace.time(0));
        this.transitions = new TransitionCache(model, steps);
    }

    /** An independent context over the same inputs, for another thread (the transition cache is not thread-safe). */
    SolveContext copy() {
        return new SolveContext(model, trace, options);
    }

    /** Step units of sample k from the first sample (ticks or periods). */
    long units(int k) {
        return steps.unitsOfSample(k, trace.time(k));
    }

    /** Names of the unknowns in vector order. */
    List<String> unknownNames() {
        List<String> names = new ArrayList<>(q);
        for (int i = 0; i < n; i++) {
            names.add("x0[" + i + "]");
        }
        for (int j = 0; n + j < q; j++) {
            names.add("offset[" + j + "]");
        }
        return names;
    }

    /** Writes D_j·u_k + C_j·x for output j. */
    double output(int j, double[] x, int k) {
        double s = 0.0;
        for (int i = 0; i < n; i++) {
            s += c[j * n + i] * x[i];
        }
        for (int i = 0; i < m; i++) {
            s += d[j * m + i] * trace.input(k, i);
        }
        return s;
    }

    /** x ← Ad·x + Bd·u_{k−1} over the step from sample k−1 to k; scratch has n entries. */
    void propagate(double[] x, int k, ZeroOrderHold.Step step, double[] scratch) {
        Matrices.multiplyVector(step.transition(), x, n, n, scratch);
        double[] bd = step.input();
        for (int i = 0; i < n; i++) {
            double s = scratch[i];
            for (int l = 0; l < m; l++) {
                s += bd[i * m + l] * trace.input(k - 1, l);
            }
            x[i] = s;
        }
    }
}
