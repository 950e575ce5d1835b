package backstate.reliability;

import backstate.api.TestServer;
import java.nio.charset.StandardCharsets;

/** Shared ground for the hostile-input tests: the target, the body limit, and valid bodies to break. */
final class HostileRequests {
    static final String TRACES = "/v1/units/RCX-00001/traces" + Http.DEMO_VERSION_QUERY;
    /** 1 MiB: room for every generated body, small enough that "too large" is cheap to send. */
    static final int MAX_BODY = 1 << 20;
    /** Samples in a base body: enough for a well-posed solve, few enough to keep each request cheap. */
    static final int SAMPLES = 24;
    private static final ReeferTraces REEFER = new ReeferTraces(TestServer.TEST_DATA);

    private HostileRequests() {
    }

    /** A valid CSV trace; seeds give different numbers. */
    static byte[] validCsv(long seed) {
        return REEFER.csv(SAMPLES, seed);
    }

    /** A valid JSON trace. */
    static byte[] validJson(long seed) {
        return REEFER.json(SAMPLES, seed);
    }

    static String text(byte[] body) {
        return new String(body, StandardCharsets.UTF_8);
    }

    /** A short printable preview of a body for failure reports. */
    static String preview(byte[] body) {
        StringBuilder s = new StringBuilder();
        for (int i = 0; i < Math.min(body.length, 160); i++) {
            int b = body[i] & 0xff;
            s.append(b >= 32 && b < 127 ? String.valueOf((char) b) : String.format("\\x%02x", b));
        }
        return s + (body.length > 160 ? "… (" + body.length + " bytes)" : "");
    }
}
