package backstate.jobs;

import java.util.Map;

/** Dispatches each claimed job to the handler registered for its kind. */
public final class HandlersByKind implements JobHandler {
    private final Map<String, JobHandler> handlers;

    public HandlersByKind(Map<String, JobHandler> handlers) {
        this.handlers = Map.copyOf(handlers);
    }

    @Override
    public JobOutcome handle(ClaimedJob job) throws Exception {
        JobHandler handler = handlers.get(job.kind());
        if (handler == null) {
            return new JobOutcome.Failed("no handler for job kind " + job.kind() + ", expected one of " + handlers.keySet());
        }
        return handler.handle(job);
    }
}
