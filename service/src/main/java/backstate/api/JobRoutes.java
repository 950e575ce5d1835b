package backstate.api;

import backstate.formats.FailureDetails;
import backstate.store.EstimateStore;
import backstate.store.JobRow;
import backstate.store.JobStore;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.time.Clock;

/** Job state, and cancelling a job no worker has claimed. */
final class JobRoutes {
    private final JobStore jobs;
    private final EstimateStore estimates;
    private final ObjectMapper mapper;
    private final Clock clock;

    JobRoutes(JobStore jobs, EstimateStore estimates, ObjectMapper mapper, Clock clock) {
        this.jobs = jobs;
        this.estimates = estimates;
        this.mapper = mapper;
        this.clock = clock;
    }

    void get(Context ctx) throws JsonProcessingException {
        ctx.json(view(find(ctx)));
    }

    void cancel(Context ctx) throws JsonProcessingException {
        JobRow job = find(ctx);
        if (!jobs.cancelIfQueued(job.id(), clock.instant())) {
            String state = jobs.findJob(job.id()).map(JobRow::state).orElse(job.state());
            throw ApiProblem.conflict("job " + job.id() + " is in state " + state + "; only a queued job can be cancelled");
        }
        ctx.json(view(jobs.findJob(job.id()).orElseThrow()));
    }

    private Views.Job view(JobRow job) throws JsonProcessingException {
        String estimateId = "succeeded".equals(job.state()) && "estimate".equals(job.kind())
                ? estimates.findEstimateForJob(job.id()).map(e -> e.id()).orElse(null) : null;
        FailureDetails failure = StoredJson.read(mapper, job.failureJson(), FailureDetails.class, "the failure of job " + job.id());
        return Views.Job.of(job, estimateId, failure);
    }

    private JobRow find(Context ctx) {
        String id = Params.identifier(ctx, "jobId");
        return jobs.findJob(id).orElseThrow(() -> ApiProblem.notFound("job " + id));
    }
}
