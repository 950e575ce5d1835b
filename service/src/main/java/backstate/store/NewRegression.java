package backstate.store;

/** A regression run about to be queued: the family, the two versions, and the job's parameters as JSON. */
public record NewRegression(String family, int baseline, int candidate, String paramsJson) {

    public NewRegression {
        Expect.notBlank("family", family);
        Expect.atLeast("baseline", baseline, 1);
        Expect.atLeast("candidate", candidate, 1);
        if (baseline == candidate) {
            throw new IllegalArgumentException("got baseline = candidate = " + baseline + ", expected two versions");
        }
        Expect.notBlank("paramsJson", paramsJson);
    }
}
