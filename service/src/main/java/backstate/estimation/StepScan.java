package backstate.estimation;

import java.util.concurrent.CompletableFuture;

/**
 * One walk over a trace's sample times, as validation needs it: every time converted to step units
 * (rejecting a time off a discrete model's grid), no two samples on one unit, whether a chosen unit
 * (the process-noise reference) is a sample's, and the one step between consecutive samples if
 * there is one. A long trace is walked as two halves on two cores; the halves' findings combine
 * exactly, and the earlier half's error wins, so the error named is the one a single walk meets first.
 *
 * @param step       the step of the walked samples' consecutive pairs when all are equal (or the first
 *                   step when not), {@link SolveContext#UNEVEN} when the range has no pair
 * @param even       whether every pair has that step
 * @param foundUnits whether some sample sits on the sought unit
 */
record StepScan(long step, boolean even, boolean foundUnits) {
    /** Walks every sample, looking for a sample on {@code sought} units (−1: none sought); in two halves as the equation pass splits. */
    static StepScan of(StateSpaceModel model, SampleSteps steps, double[] times, long sought) {
        int samples = times.length;
        if (!ChunkedEquations.inTwoHalves(samples)) {
            return walk(model, steps, times, 0, samples, sought);
        }
        int middle = samples / 2;
        CompletableFuture<StepScan> tail = CompletableFuture.supplyAsync(
                () -> walk(model, steps, times, middle, samples, sought));
        StepScan head = walk(model, steps, times, 0, middle, sought);
        return head.then(ChunkedEquations.await(tail));
    }

    /** The findings of this range followed by the adjacent {@code later} one (which checked the pair across the join). */
    private StepScan then(StepScan later) {
        boolean sameStep = step == SolveContext.UNEVEN || later.step == SolveContext.UNEVEN || step == later.step;
        long combined = step == SolveContext.UNEVEN ? later.step : step;
        return new StepScan(combined, even && later.even && sameStep, foundUnits || later.foundUnits);
    }

    /** Samples from … to−1, each against the one before it (sample from−1 too, when there is one). */
    private static StepScan walk(StateSpaceModel model, SampleSteps steps, double[] times, int from, int to,
                                 long sought) {
        long previous = from == 0 ? -1 : steps.unitsOfSample(from - 1, times[from - 1]);
        long step = SolveContext.UNEVEN;
        boolean even = true;
        boolean found = false;
        for (int k = from; k < to; k++) {
            long units = steps.unitsOfSample(k, times[k]);
            if (units == sought) {
                found = true;
            }
            if (units == previous) {
                throw new ModelException("time[" + k + "]", model.isDiscrete()
                        ? "got a second sample on grid step " + units + ", expected one sample per sample period at most"
                        : "got a sample less than 1 µs after the previous one, expected times at least 1 µs apart");
            }
            if (k > 0) {
                if (step == SolveContext.UNEVEN) {
                    step = units - previous;
                } else if (units - previous != step) {
                    even = false;
                }
            }
            previous = units;
        }
        return new StepScan(step, even, found);
    }
}
