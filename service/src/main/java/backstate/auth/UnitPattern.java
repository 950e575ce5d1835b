package backstate.auth;

import java.util.Optional;
import java.util.regex.Pattern;

/**
 * A gateway key's scope: a glob over unit IDs, matched against the whole ID.
 * {@code *} stands for any run of unit-ID characters (possibly empty), {@code ?} for exactly one,
 * everything else for itself, case-sensitively: {@code RCX-1*} covers RCX-1 and RCX-10415 but not
 * RCX-2 or XRCX-1. Only unit-ID characters and the two wildcards are accepted. Matching is a
 * two-pointer walk that, on a mismatch, retries from the last star only: at most
 * (glob length + 1) × (ID length + 1) steps, whatever the pattern, with no regular expression.
 */
public final class UnitPattern {
    /** 1–64 of the characters unit IDs use (letters, digits, '_', '.', '-') and the wildcards. */
    public static final Pattern GLOB = Pattern.compile("[A-Za-z0-9_.\\-*?]{1,64}");
    /** Stars a new key's pattern may hold; patterns stored before the cap still match as written. */
    public static final int MAX_STARS = 8;
    private static final Pattern UNIT_CHARS = Pattern.compile("[A-Za-z0-9_.\\-]*");

    private final String glob;

    private UnitPattern(String glob) {
        this.glob = glob;
    }

    /** The pattern, or empty when the text is not an accepted glob (see {@link #GLOB}). */
    public static Optional<UnitPattern> parse(String glob) {
        return glob != null && GLOB.matcher(glob).matches() ? Optional.of(new UnitPattern(glob)) : Optional.empty();
    }

    /** For patterns already validated (read back from the database). */
    public static UnitPattern of(String glob) {
        return parse(glob).orElseThrow(() -> new IllegalArgumentException(
                "got unit pattern '" + glob + "', expected " + GLOB.pattern()));
    }

    /** True when the whole unit ID matches; false for null and for IDs holding other than unit-ID characters. */
    public boolean matches(String unitId) {
        return unitId != null && UNIT_CHARS.matcher(unitId).matches() && walk(glob, unitId, new int[1]);
    }

    /** How many {@code *} the pattern holds (new keys may hold up to {@link #MAX_STARS}). */
    public int stars() {
        return (int) glob.chars().filter(c -> c == '*').count();
    }

    public String glob() {
        return glob;
    }

    @Override
    public String toString() {
        return glob;
    }

    /** Steps the match of {@code unitId} takes, for the test of the bound in the class comment. */
    int steps(String unitId) {
        int[] steps = new int[1];
        walk(glob, unitId, steps);
        return steps[0];
    }

    /**
     * Glob match with one remembered star: on a mismatch the last star swallows one more character
     * and the walk resumes after it. Earlier stars never need revisiting, since the last star can
     * absorb anything they could have, so the walk is linear in the ID per star position.
     */
    private static boolean walk(String glob, String id, int[] steps) {
        int g = 0;
        int s = 0;
        int star = -1;
        int starAt = 0;
        while (s < id.length()) {
            steps[0]++;
            char p = g < glob.length() ? glob.charAt(g) : 0;
            if (p == '?' || (p != '*' && p != 0 && p == id.charAt(s))) {
                g++;
                s++;
            } else if (p == '*') {
                star = g++;
                starAt = s;
            } else if (star >= 0) {
                g = star + 1;
                s = ++starAt;
            } else {
                return false;
            }
        }
        while (g < glob.length() && glob.charAt(g) == '*') {
            g++;
        }
        return g == glob.length();
    }
}
