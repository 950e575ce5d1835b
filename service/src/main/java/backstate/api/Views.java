package backstate.api;

import backstate.estimation.ObservabilityRank;
import backstate.formats.EstimateCaution;
import backstate.formats.EstimateDocument;
import backstate.formats.FailureDetails;
import backstate.formats.RecordingTime;
import backstate.formats.UnobservableDirection;
import backstate.store.EstimateRow;
import backstate.store.FamilyRow;
import backstate.store.JobRow;
import backstate.store.ModelVersionRow;
import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.annotation.JsonRawValue;
import java.util.List;
import java.util.Map;

/** Response bodies: records named after what they show, built from store rows. */
final class Views {
    private Views() {
    }

    record Page<T>(List<T> items, String nextCursor) {
    }

    record Family(String name, String description, String createdAt) {
        static Family of(FamilyRow row) {
            return new Family(row.name(), row.description(), row.createdAt().toString());
        }
    }

    record Observability(boolean observable, int rank, int states, List<Double> singularValues, Double rankTolerance,
                         List<List<Double>> unobservableDirections) {
        static Observability of(ObservabilityRank.Report r) {
            return new Observability(r.observable(), r.rank(), r.states(), EstimateDocument.list(r.singularValues()),
                    EstimateDocument.num(r.tolerance()), r.unobservable().stream().map(EstimateDocument::list).toList());
        }
    }

    record Version(String family, int version, String status, String timeDomain, int states, int outputs, int inputs,
                   String createdAt, @JsonRawValue String observability, @JsonRawValue String document) {
        static Version of(ModelVersionRow row) {
            return new Version(row.family(), row.version(), row.status(), row.timeDomain(), row.states(), row.outputs(),
                    row.inputs(), row.createdAt().toString(),
                    StoredJson.checked(row.observabilityJson(), item(row)), StoredJson.checked(row.documentJson(), item(row)));
        }

        private static String item(ModelVersionRow row) {
            return "model version " + row.family() + "/" + row.version();
        }
    }

    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Accepted(String jobId, String traceId, String unitId, String state, Map<String, String> links,
                    List<Problem.FieldError> warnings) {
    }

    /** A job; {@code unobservableDirections} on an estimate job that failed because the data leave them undetermined. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Job(String id, String kind, String state, String traceId, int attempt, String createdAt, String startedAt,
               String finishedAt, List<String> errors, Progress progress, String estimateId,
               @JsonRawValue String result, List<UnobservableDirection> unobservableDirections) {
        static Job of(JobRow row, String estimateId, FailureDetails failureOrNull) {
            List<UnobservableDirection> directions = failureOrNull == null || failureOrNull.unobservableDirections().isEmpty()
                    ? null : failureOrNull.unobservableDirections();
            return new Job(row.id(), row.kind(), row.state(), row.traceId(), row.attempt(), text(row.createdAt()),
                    text(row.startedAt()), text(row.finishedAt()), row.errors(),
                    row.progressTotal() > 0 ? new Progress(row.progressDone(), row.progressTotal()) : null,
                    estimateId, StoredJson.checked(row.resultJson(), "the result of job " + row.id()), directions);
        }
    }

    record Progress(int done, int total) {
    }

    /**
     * An estimate without its document. windowStart and windowEnd are the trace's first and last
     * sample times, when it was recorded; receivedAt when the service received it; createdAt when
     * the estimate was written. All RFC 3339 in UTC.
     */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record EstimateSummary(String id, String unitId, String family, int version, String jobId, String traceId,
                           String windowStart, String windowEnd, String receivedAt, String createdAt,
                           Double chiSquarePerDof, List<String> flags) {
        static EstimateSummary of(EstimateRow row) {
            return new EstimateSummary(row.id(), row.unitId(), row.family(), row.version(), row.jobId(), row.traceId(),
                    RecordingTime.format(row.windowStart()), RecordingTime.format(row.windowEnd()),
                    row.receivedAt().toString(), row.createdAt().toString(), row.chi2PerDof(), row.flags());
        }
    }

    /** An estimate in full: the summary's fields, its document and the caution. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record Estimate(String id, String unitId, String family, int version, String jobId, String traceId,
                    String windowStart, String windowEnd, String receivedAt, String createdAt, Double chiSquarePerDof,
                    List<String> flags, @JsonRawValue String result, String caution) {
        static Estimate of(EstimateRow row) {
            return new Estimate(row.id(), row.unitId(), row.family(), row.version(), row.jobId(), row.traceId(),
                    RecordingTime.format(row.windowStart()), RecordingTime.format(row.windowEnd()),
                    row.receivedAt().toString(), row.createdAt().toString(), row.chi2PerDof(), row.flags(),
                    StoredJson.checked(row.summaryJson(), "estimate " + row.id()), CAUTION);
        }
    }

    /**
     * Every {@code stride}-th sample of a trace: measured and fitted outputs and residuals by
     * output name, and the estimated state trajectory with its standard error and 95 % band by
     * state name; null where a value is missing.
     */
    record Series(List<String> outputs, List<String> states, int points, int stride, List<Double> time,
                  Map<String, List<Double>> measured, Map<String, List<Double>> fitted,
                  Map<String, List<Double>> residual, Map<String, StateBand> state, String caution) {
    }

    /** One state along the window: estimate, standard error and 95 % interval per kept sample. */
    record StateBand(List<Double> estimate, List<Double> standardError, List<Double> lower, List<Double> upper) {
    }

    /** Shown with every estimate: what an estimate may and may not be used for. */
    static final String CAUTION = EstimateCaution.TEXT;

    private static String text(java.time.Instant t) {
        return t == null ? null : t.toString();
    }
}
