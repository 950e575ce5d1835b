package backstate.api;

import backstate.store.JobRow;
import backstate.store.Store;
import io.javalin.http.Context;
import java.time.Clock;

/** Job state, and cancelling a job no worker has claimed. */
final class JobRoutes {
    private final Store store;
    private final Clock clock;

    JobRoutes(Store store, Clock clock) {
        this.store = store;
        this.clock = clock;
    }

    void get(Context ctx) {
        ctx.json(view(find(ctx)));
    }

    void cancel(Context ctx) {
        JobRow job = find(ctx);
        if (!store.cancelIfQueued(job.id(), clock.instant())) {
            throw ApiProblem.conflict("job " + job.id() + " is " + store.findJob(job.id()).map(JobRow::state).orElse(job.state())
                    + "; only a queued job can be cancelled");
        }
        ctx.json(view(store.findJob(job.id()).orElseThrow()));
    }

    private Views.Job view(JobRow job) {
        String estimateId = "succeeded".equals(job.state()) && "estimate".equals(job.kind())
                ? store.findEstimateForJob(job.id()).map(e -> e.id()).orElse(null) : null;
        return Views.Job.of(job, estimateId);
    }

    private JobRow find(Context ctx) {
        String id = Params.identifier(ctx, "jobId");
        return store.findJob(id).orElseThrow(() -> ApiProblem.notFound("job " + id));
    }
}
