package backstate.store;

import java.util.Set;

/** A model version about to be published; the store allocates its number. */
public record NewModelVersion(String family, String timeDomain, int states, int outputs, int inputs,
                              String documentJson, String observabilityJson) {

    /** The values of {@code model_versions.time_domain}. */
    public static final Set<String> TIME_DOMAINS = Set.of("continuous", "discrete");

    public NewModelVersion {
        Expect.notBlank("family", family);
        if (!TIME_DOMAINS.contains(timeDomain)) {
            throw new IllegalArgumentException(
                    "got timeDomain " + timeDomain + ", expected 'continuous' or 'discrete'");
        }
        Expect.atLeast("states", states, 1);
        Expect.atLeast("outputs", outputs, 1);
        Expect.atLeast("inputs", inputs, 0);
        Expect.notNull("documentJson", documentJson);
        Expect.notNull("observabilityJson", observabilityJson);
    }
}
