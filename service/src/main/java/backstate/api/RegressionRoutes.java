package backstate.api;

import backstate.regression.RegressionParams;
import backstate.regression.RegressionRequest;
import backstate.regression.RegressionRequests;
import backstate.store.JobRow;
import backstate.store.NewRegression;
import backstate.store.RegressionRow;
import backstate.store.JobStore;
import backstate.store.ModelCatalogue;
import backstate.store.RegressionStore;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.time.Clock;

/**
 * Model-version regression runs: start one over stored traces (a queued 'regression' job; the
 * request's checks and trace selection are {@link RegressionRequests}'), read its state, progress
 * and result, list runs, and cancel one.
 */
final class RegressionRoutes {
    static final int DEFAULT_PAGE = 50;
    static final int MAX_PAGE = 500;

    private final RegressionStore regressions;
    private final JobStore jobs;
    private final RegressionRequests requests;
    private final ObjectMapper mapper;
    private final Clock clock;
    private final long maxBodyBytes;
    private final int maxQueued;
    private final Runnable wakeWorkers;

    RegressionRoutes(ModelCatalogue models, RegressionStore regressions, JobStore jobs, ObjectMapper mapper, Clock clock,
                     long maxBodyBytes, int maxQueued, Runnable wakeWorkers) {
        this.regressions = regressions;
        this.jobs = jobs;
        this.requests = new RegressionRequests(models, regressions, mapper);
        this.mapper = mapper;
        this.clock = clock;
        this.maxBodyBytes = maxBodyBytes;
        this.maxQueued = maxQueued;
        this.wakeWorkers = wakeWorkers;
    }

    void create(Context ctx) throws Exception {
        RegressionParams params = requests.check(read(ctx));
        String id = regressions.createRegression(new NewRegression(params.family(), params.baseline(), params.candidate(),
                mapper.writeValueAsString(params)), maxQueued, clock.instant());
        wakeWorkers.run();
        ctx.status(202).header("Location", "/v1/regressions/" + id).json(view(find(id)));
    }

    void get(Context ctx) throws Exception {
        ctx.json(view(find(ctx)));
    }

    void list(Context ctx) {
        String family = ctx.queryParam("family") == null ? null : Params.identifier("family", ctx.queryParam("family"));
        String cursor = ctx.queryParam("cursor");
        if (cursor != null && (cursor.isEmpty() || cursor.length() > 512)) {
            throw ApiProblem.invalid("cursor", "not a cursor from this API");
        }
        var page = regressions.listRegressions(family, cursor, Params.intOrDefault(ctx, "limit", DEFAULT_PAGE, MAX_PAGE));
        ctx.json(new Views.Page<>(page.items().stream().map(RegressionViews.Summary::of).toList(),
                page.nextCursorOrNull()));
    }

    /** Queued: cancelled at once (200). Running: a cancel request its worker acts on between traces (202). */
    void cancel(Context ctx) throws Exception {
        RegressionRow run = find(ctx);
        if (jobs.cancelIfQueued(run.id(), clock.instant())) {
            ctx.json(view(find(run.id())));
            return;
        }
        if (regressions.requestRegressionCancel(run.id(), clock.instant())) {
            ctx.status(202).json(view(find(run.id())));
            return;
        }
        throw ApiProblem.conflict("regression " + run.id() + " is in state " + find(run.id()).state()
                + "; only a queued or running run can be cancelled");
    }

    /**
     * The run with its job, as one state: the job is read first and the run (which carries the
     * verdict) after it, so the run is at least as new; if the job finished in between, it is read
     * again (a finished job never changes), so "succeeded" never shows without its verdict.
     */
    private RegressionViews.Regression view(RegressionRow seen) throws Exception {
        JobRow job = jobs.findJob(seen.id()).orElseThrow();
        RegressionRow run = find(seen.id());
        if (!run.state().equals(job.state())) {
            job = jobs.findJob(seen.id()).orElseThrow();
        }
        return RegressionViews.Regression.of(run, job, StoredJson.read(mapper, job.paramsJson(),
                RegressionParams.class, "the request of regression run " + run.id()));
    }

    private RegressionRequest read(Context ctx) throws Exception {
        ModelRoutes.requireJson(ctx);
        try (InputStream in = BodyLimit.open(ctx, maxBodyBytes)) {
            RegressionRequest body = mapper.readerFor(RegressionRequest.class)
                    .with(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES).readValue(in);
            if (body == null) {
                throw ApiProblem.invalid("body", "got nothing, expected a JSON object");
            }
            return body;
        }
    }

    private RegressionRow find(Context ctx) {
        return find(Params.identifier(ctx, "regressionId"));
    }

    private RegressionRow find(String id) {
        return regressions.findRegression(id).orElseThrow(() -> ApiProblem.notFound("regression " + id));
    }
}
