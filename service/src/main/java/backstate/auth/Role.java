package backstate.auth;

import backstate.text.Listed;
import java.util.Arrays;
import java.util.Locale;
import java.util.Optional;

/** What a key may do; the access rule of each route ({@code backstate.api.Access}) names which roles pass. */
public enum Role {
    /** Everything, including key management and publishing models. */
    ADMIN,
    /** Post traces and read the jobs they made, for units matching the key's pattern only. */
    GATEWAY,
    /** Read estimates, fleet views, regressions and models. */
    READER,
    /** For CI: start regression runs and read what a reader reads, except jobs; nothing else. */
    PIPELINE;

    /** The role as written in the API and the database: "admin", "gateway", "reader", "pipeline". */
    public String wireName() {
        return name().toLowerCase(Locale.ROOT);
    }

    public static Optional<Role> parse(String wireName) {
        return Arrays.stream(values()).filter(r -> r.wireName().equals(wireName)).findFirst();
    }

    /** For rows read back from the database, whose CHECK admits only these names. */
    public static Role of(String wireName) {
        return parse(wireName).orElseThrow(() -> new IllegalArgumentException(
                "got role '" + wireName + "', expected " + choices()));
    }

    /** The wire names for a message: "admin, gateway, reader or pipeline". */
    public static String choices() {
        return Listed.of(Arrays.stream(values()).map(Role::wireName).toList(), "or");
    }
}
