package backstate.api;

import backstate.regression.RegressionParams;
import backstate.regression.Selection;
import backstate.regression.Tolerances;
import backstate.store.JobRow;
import backstate.store.RegressionRow;
import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonRawValue;
import java.time.Instant;
import java.util.List;
import java.util.Map;

/** Response bodies of the regression routes, built from store rows. */
final class RegressionViews {
    private RegressionViews() {
    }

    /** The request as accepted: tolerances with defaults filled in, and how many traces it selected. */
    record Request(String family, int baseline, int candidate, Selection traces, Tolerances tolerances,
                   int traceCount) {
        static Request of(RegressionParams p) {
            return new Request(p.family(), p.baseline(), p.candidate(), p.traces(), p.tolerances(),
                    p.traceIds().size());
        }
    }

    /** One run: its job's state and progress (traces done of total), and its result once it has one. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Regression(String id, String family, int baseline, int candidate, String state, Views.Progress progress,
                      boolean cancelRequested, String createdAt, String startedAt, String finishedAt, Boolean pass,
                      List<String> errors, Request request, @JsonRawValue String result, Map<String, String> links,
                      String caution) {
        static Regression of(RegressionRow run, JobRow job, RegressionParams params) {
            return new Regression(run.id(), run.family(), run.baseline(), run.candidate(), job.state(),
                    new Views.Progress(job.progressDone(), params.traceIds().size()),
                    run.cancelRequestedAtOrNull() != null, text(job.createdAt()), text(job.startedAt()),
                    text(job.finishedAt()), run.passOrNull(), job.errors(), Request.of(params),
                    StoredJson.checked(job.resultJson(), "the result of regression run " + run.id()),
                    Map.of("self", "/v1/regressions/" + run.id(), "cancel", "/v1/regressions/" + run.id() + "/cancel"),
                    Views.CAUTION);
        }
    }

    /** A run in a list: no request or result, which GET /v1/regressions/{regressionId} shows. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Summary(String id, String family, int baseline, int candidate, String state, Views.Progress progress,
                   String createdAt, String finishedAt, Boolean pass) {
        static Summary of(RegressionRow run) {
            return new Summary(run.id(), run.family(), run.baseline(), run.candidate(), run.state(),
                    run.progressTotal() > 0 ? new Views.Progress(run.progressDone(), run.progressTotal()) : null,
                    text(run.createdAt()), text(run.finishedAtOrNull()), run.passOrNull());
        }
    }

    private static String text(Instant t) {
        return t == null ? null : t.toString();
    }
}
