package backstate.store;

import java.util.List;

/** An estimate a job produced, written with the job's completion. */
public record NewEstimate(String traceId, String unitId, String family, int version, double windowStart,
                          double windowEnd, Double chi2PerDof, List<String> flags, String summaryJson) {

    public NewEstimate {
        Expect.notBlank("traceId", traceId);
        Expect.notBlank("unitId", unitId);
        Expect.notBlank("family", family);
        Expect.atLeast("version", version, 1);
        Expect.window(windowStart, windowEnd);
        if (chi2PerDof != null && !(chi2PerDof >= 0 && Double.isFinite(chi2PerDof))) {
            throw new IllegalArgumentException("got chi2PerDof " + chi2PerDof + ", expected null or finite >= 0");
        }
        flags = List.copyOf(flags);
        flags.forEach(Expect::flag);
        Expect.notNull("summaryJson", summaryJson);
    }
}
