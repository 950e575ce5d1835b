package backstate.store;

/** A trace about to be stored; the payload is opaque bytes to the store. */
public record NewTrace(String unitId, String family, int version, int samples, double windowStart,
                       double windowEnd, byte[] payload) {

    public NewTrace {
        Expect.notBlank("unitId", unitId);
        Expect.notBlank("family", family);
        Expect.atLeast("version", version, 1);
        Expect.atLeast("samples", samples, 1);
        Expect.window(windowStart, windowEnd);
        Expect.notNull("payload", payload);
    }
}
