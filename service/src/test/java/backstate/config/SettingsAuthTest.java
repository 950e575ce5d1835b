package backstate.config;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Map;
import org.junit.jupiter.api.Test;

/** Access control settings: on by default, --auth over BACKSTATE_AUTH, and an admin key that never prints. */
class SettingsAuthTest {
    static final String KEY = "bsk_0123456789abcdef_" + "ab".repeat(32);

    @Test
    void access_control_is_on_by_default() {
        assertTrue(Settings.from(new String[0], Map.of()).auth());
    }

    @Test
    void flag_wins_over_environment() {
        assertFalse(Settings.from(new String[0], Map.of("BACKSTATE_AUTH", "off")).auth());
        assertTrue(Settings.from(new String[] {"--auth", "on"}, Map.of("BACKSTATE_AUTH", "off")).auth());
        assertFalse(Settings.from(new String[] {"--auth", "off"}, Map.of()).auth());
    }

    @Test
    void other_values_are_refused_naming_the_setting() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> Settings.from(new String[] {"--auth", "yes"}, Map.of()));
        assertEquals("setting auth: got yes, expected on or off", e.getMessage());
    }

    @Test
    void admin_key_comes_from_the_environment_and_never_prints() {
        Settings s = Settings.from(new String[0], Map.of("BACKSTATE_ADMIN_KEY", KEY));
        assertEquals(KEY, s.adminKey().orElseThrow().value());
        assertFalse(s.toString().contains(KEY), s.toString());
        assertFalse(s.describe().contains(KEY), s.describe());
        assertTrue(s.describe().contains("auth=on admin-key=set"), s.describe());
        assertThrows(IllegalArgumentException.class, () -> Settings.from(new String[] {"--admin-key", KEY}, Map.of()),
                "no flag for the key: flags show in process lists");
    }
}
