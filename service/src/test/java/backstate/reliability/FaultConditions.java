package backstate.reliability;

import java.util.Map;
import org.junit.jupiter.api.Assertions;
import org.junit.jupiter.api.Assumptions;

/**
 * What a test does when it cannot make the trouble it is about (a full disk, a read-only
 * filesystem: both need a tmpfs mount, so root with CAP_SYS_ADMIN). On CI it fails, naming what
 * was missing, since a skipped check there would pass unnoticed; on a developer's machine without
 * the privilege it is skipped with the same words. CI is recognised by
 * {@value #REQUIRE_VARIABLE}=1 (set by .ci/run) or by a set {@value #CI_VARIABLE} variable (as
 * hosted CI services set it), the way the console tests honour BACKSTATE_REQUIRE_BROWSER.
 */
final class FaultConditions {
    static final String REQUIRE_VARIABLE = "BACKSTATE_REQUIRE_FAULTS";
    static final String CI_VARIABLE = "CI";

    private FaultConditions() {
    }

    /** Continues when {@code made}; else fails (CI) or skips (elsewhere) with {@code missing} as the reason. */
    static void require(boolean made, String missing) {
        require(made, missing, System.getenv());
    }

    static void require(boolean made, String missing, Map<String, String> env) {
        if (made) {
            return;
        }
        if (required(env)) {
            Assertions.fail("could not create the test's condition: " + missing + " (" + REQUIRE_VARIABLE + "=1 or "
                    + CI_VARIABLE + " is set, so this fails rather than skips; give the CI job the privilege)");
        }
        Assumptions.abort(missing + "; skipped (set " + REQUIRE_VARIABLE + "=1 to fail instead)");
    }

    static boolean required(Map<String, String> env) {
        String ci = env.getOrDefault(CI_VARIABLE, "");
        return "1".equals(env.get(REQUIRE_VARIABLE)) || !ci.isEmpty() && !ci.equalsIgnoreCase("false") && !ci.equals("0");
    }
}
