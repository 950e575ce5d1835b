package backstate.formats;

import backstate.estimation.Formulation;
import java.time.Instant;
import java.util.ArrayList;
import java.util.List;

/**
 * Something about an accepted trace its sender should check, by field: a window dated before 2000
 * ({@link RecordingTime#earlyWindowNote}) or ending after the clock ({@link RecordingTime#lateWindowNote}),
 * on {@code time}; an output with no value in the window (a dead or unplugged sensor), or with
 * one under the continuous formulation, on {@code outputs.<name>} in a JSON body or
 * {@code column <name>} in a CSV one.
 */
public record TraceWarning(String field, String detail) {
    static final String NO_VALUE = "no value in the window: every sample of this output is missing, so the estimate"
            + " rests on the other outputs";
    static final String LONE_VALUE = "one value in the window: the continuous formulation weighs a value by the time"
            + " it covers up to its neighbours, and a lone value has none, so this output does not count; the sampled"
            + " formulation would use it";

    /**
     * The window's dates: what the service's fleet views and a unit's latest estimate go by, so
     * the service warns of them ({@code backstate solve}, which dates nothing, does not).
     */
    public static List<TraceWarning> ofWindow(double windowStart, double windowEnd, boolean timesAsNumbers, Instant now) {
        List<TraceWarning> out = new ArrayList<>();
        for (String note : new String[] {RecordingTime.earlyWindowNote(windowStart, timesAsNumbers),
            RecordingTime.lateWindowNote(windowEnd, now)}) {
            if (note != null) {
                out.add(new TraceWarning("time", note));
            }
        }
        return out;
    }

    /**
     * Each output j of the model with no value in the window, and under the continuous formulation
     * each with a single value, which its trapezoid weights leave out. Named as the body names the output.
     */
    public static List<TraceWarning> ofOutputs(ModelDocument model, ParsedColumns columns, Formulation formulation,
                                               boolean json) {
        List<TraceWarning> out = new ArrayList<>();
        for (int j = 0; j < model.outputs().size(); j++) {
            int values = columns.values(j, 2);
            String field = (json ? "outputs." : "column ") + model.outputs().get(j).name();
            if (values == 0) {
                out.add(new TraceWarning(field, NO_VALUE));
            } else if (values == 1 && formulation == Formulation.CONTINUOUS) {
                out.add(new TraceWarning(field, LONE_VALUE));
            }
        }
        return out;
    }
}
