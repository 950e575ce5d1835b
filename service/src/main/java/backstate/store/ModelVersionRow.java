package backstate.store;

import java.time.Instant;

/** A published model version; status is 'active' or 'retired'. */
public record ModelVersionRow(String family, int version, String status, String timeDomain, int states,
                              int outputs, int inputs, String documentJson, String observabilityJson,
                              Instant createdAt) {
}
