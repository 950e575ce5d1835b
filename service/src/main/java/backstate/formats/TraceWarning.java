package backstate.formats;

import java.time.Instant;
import java.util.ArrayList;
import java.util.List;
import java.util.function.IntPredicate;

/**
 * Something about an accepted trace its sender should check, by field: a window dated before 2000
 * ({@link RecordingTime#earlyWindowNote}) or ending after the clock ({@link RecordingTime#lateWindowNote}),
 * on {@code time}; an output with no value in the window (a dead or unplugged sensor), on
 * {@code outputs.<name>} in a JSON body or {@code column <name>} in a CSV one.
 */
public record TraceWarning(String field, String detail) {
    static final String NO_VALUE = "no value in the window: every sample of this output is missing, so the estimate"
            + " rests on the other outputs";

    /**
     * The window's dates: what the service's fleet views and a unit's latest estimate go by, so
     * the service warns of them ({@code backstate solve}, which dates nothing, does not).
     */
    public static List<TraceWarning> ofWindow(double windowStart, double windowEnd, Instant now) {
        List<TraceWarning> out = new ArrayList<>();
        for (String note : new String[] {RecordingTime.earlyWindowNote(windowStart), RecordingTime.lateWindowNote(windowEnd, now)}) {
            if (note != null) {
                out.add(new TraceWarning("time", note));
            }
        }
        return out;
    }

    /** Each output j of the model with no value in the window ({@code hasValues.test(j)} false), named as the body names it. */
    public static List<TraceWarning> ofOutputs(ModelDocument model, IntPredicate hasValues, boolean json) {
        List<TraceWarning> out = new ArrayList<>();
        for (int j = 0; j < model.outputs().size(); j++) {
            if (!hasValues.test(j)) {
                out.add(new TraceWarning((json ? "outputs." : "column ") + model.outputs().get(j).name(), NO_VALUE));
            }
        }
        return out;
    }
}
