package backstate.formats;

import backstate.estimation.Trace;

/** A trace read from JSON or CSV, with the solve options that came with it. */
public record ParsedTrace(Trace trace, TraceOptions options) {
}
