package backstate.store;

import java.util.Collections;
import java.util.List;

/**
 * The SQL of a {@link TimeFilter} on a table with window_start (recording time, epoch seconds)
 * and received_at (epoch milliseconds), and its values in placeholder order.
 */
final class TimeConditions {
    /** Each "CAST(? AS TEXT) IS NULL OR ..." is bound twice with the same value, as in SqlEstimates. */
    static final String RECORDED_AND_RECEIVED = " AND (CAST(? AS TEXT) IS NULL OR window_start >= ?)"
            + " AND (CAST(? AS TEXT) IS NULL OR window_start < ?)"
            + " AND (CAST(? AS TEXT) IS NULL OR received_at >= ?)"
            + " AND (CAST(? AS TEXT) IS NULL OR received_at < ?)";

    private TimeConditions() {
    }

    /** Appends the values of {@link #RECORDED_AND_RECEIVED}. */
    static void bind(List<Object> values, TimeFilter t) {
        Double recordedFrom = Sql.recordingSecondsOrNull(t.recordedFromOrNull());
        Double recordedTo = Sql.recordingSecondsOrNull(t.recordedToOrNull());
        Long receivedFrom = Sql.millisBoundOrNull(t.receivedFromOrNull());
        Long receivedTo = Sql.millisBoundOrNull(t.receivedToOrNull());
        Collections.addAll(values, recordedFrom, recordedFrom, recordedTo, recordedTo, receivedFrom, receivedFrom,
                receivedTo, receivedTo);
    }
}
