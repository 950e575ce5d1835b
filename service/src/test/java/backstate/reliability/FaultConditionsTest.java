package backstate.reliability;

import static org.junit.jupiter.api.Assertions.assertDoesNotThrow;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Map;
import org.junit.jupiter.api.Test;
import org.opentest4j.AssertionFailedError;
import org.opentest4j.TestAbortedException;

/** A missing fault condition fails on CI and skips elsewhere; a made one does neither. */
class FaultConditionsTest {
    static final String MISSING = "mount -t tmpfs failed: permission denied";

    @Test
    void a_missing_condition_fails_naming_it_when_faults_are_required() {
        AssertionFailedError e = assertThrows(AssertionFailedError.class,
                () -> FaultConditions.require(false, MISSING, Map.of("BACKSTATE_REQUIRE_FAULTS", "1")));
        assertTrue(e.getMessage().contains(MISSING), e.getMessage());
    }

    @Test
    void a_missing_condition_fails_on_hosted_ci_that_sets_ci() {
        assertThrows(AssertionFailedError.class, () -> FaultConditions.require(false, MISSING, Map.of("CI", "true")));
    }

    @Test
    void a_missing_condition_is_skipped_on_a_developer_machine() {
        TestAbortedException e = assertThrows(TestAbortedException.class,
                () -> FaultConditions.require(false, MISSING, Map.of("CI", "false")));
        assertTrue(e.getMessage().contains(MISSING), e.getMessage());
    }

    @Test
    void a_made_condition_neither_fails_nor_skips() {
        assertDoesNotThrow(() -> FaultConditions.require(true, MISSING, Map.of("BACKSTATE_REQUIRE_FAULTS", "1")));
    }
}
