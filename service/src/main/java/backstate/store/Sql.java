package backstate.store;

import java.security.SecureRandom;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;
import java.util.UUID;

/** Small JDBC helpers shared by the SQLite statement classes. */
final class Sql {
    private static final long MICROS_PER_SECOND = 1_000_000L;
    private static final long NANOS_PER_MICRO = 1000L;
    private static final long NANOS_PER_MILLI = 1_000_000L;
    /** RFC 9562 §4.2: version 7 in bits 48-51. */
    private static final long UUID_VERSION_7 = 0x7000L;
    /** RFC 9562 §4.1: variant bits 10 at the top of the low half. */
    private static final long UUID_VARIANT_RFC = 0x8000000000000000L;
    private static final SecureRandom ID_RANDOM = new SecureRandom();

    private Sql() {
    }

    /** Maps the current row of a result set. */
    @FunctionalInterface
    interface RowMapper<T> {
        T map(ResultSet rs) throws SQLException;
    }

    /** Binds values to parameters 1..n; a null binds SQL NULL. */
    static PreparedStatement bind(PreparedStatement ps, Object... values) throws SQLException {
        for (int i = 0; i < values.length; i++) {
            ps.setObject(i + 1, values[i]);
        }
        return ps;
    }

    static <T> List<T> list(PreparedStatement ps, RowMapper<T> mapper) throws SQLException {
        List<T> rows = new ArrayList<>();
        try (ResultSet rs = ps.executeQuery()) {
            while (rs.next()) {
                rows.add(mapper.map(rs));
            }
        }
        return rows;
    }

    /** The first row, or null when there is none. */
    static <T> T firstOrNull(PreparedStatement ps, RowMapper<T> mapper) throws SQLException {
        try (ResultSet rs = ps.executeQuery()) {
            return rs.next() ? mapper.map(rs) : null;
        }
    }

    /**
     * A new row ID: a time-ordered UUID, version 7 of RFC 9562 §5.7 (48 bits of Unix milliseconds,
     * then 74 random bits from a SecureRandom), in the canonical lowercase text form, so that it
     * still matches the API's Identifier pattern. IDs made later sort later as text, so each new
     * trace, job and estimate lands at the right-hand end of its key's B-tree instead of on a
     * random page: the writer's commits touch fewer pages (bench/README.md, "Where the writer's
     * time goes"). The timestamp orders rows only; no code reads a time back from an ID.
     */
    static String newId() {
        return newId(System.currentTimeMillis());
    }

    /** {@link #newId()} stamped with {@code unixMillis}; for tests. */
    static String newId(long unixMillis) {
        long high = (unixMillis << 16) | UUID_VERSION_7 | (ID_RANDOM.nextInt() & 0xFFF);
        long low = (ID_RANDOM.nextLong() & 0x3FFFFFFFFFFFFFFFL) | UUID_VARIANT_RFC;
        return new UUID(high, low).toString();
    }

    /** Timestamps are stored as epoch milliseconds UTC; sub-millisecond precision is dropped. */
    static long millis(Instant instant) {
        return instant.toEpochMilli();
    }

    static Long millisOrNull(Instant instant) {
        return instant == null ? null : instant.toEpochMilli();
    }

    /**
     * An instant as a bound on stored milliseconds ({@link #millis}), rounded up to its millisecond,
     * so that it compares with every stored time (≥ and <) as the instant itself does.
     */
    static long millisBound(Instant instant) {
        long floor = instant.toEpochMilli();
        return instant.getNano() % NANOS_PER_MILLI == 0 ? floor : floor + 1;
    }

    static Long millisBoundOrNull(Instant instant) {
        return instant == null ? null : millisBound(instant);
    }

    /**
     * An instant as a bound on recording times, which are epoch seconds on the microsecond grid
     * (REAL; see formats.RecordingTime): rounded up to its microsecond, it compares with every such
     * time (≥ and <) as the instant itself does.
     */
    static double recordingSeconds(Instant instant) {
        return (instant.getEpochSecond() * MICROS_PER_SECOND + (instant.getNano() + NANOS_PER_MICRO - 1) / NANOS_PER_MICRO)
                / (double) MICROS_PER_SECOND;
    }

    static Double recordingSecondsOrNull(Instant instant) {
        return instant == null ? null : recordingSeconds(instant);
    }

    static Instant instant(ResultSet rs, String column) throws SQLException {
        long millis = rs.getLong(column);
        return rs.wasNull() ? null : Instant.ofEpochMilli(millis);
    }

    static Double doubleOrNull(ResultSet rs, String column) throws SQLException {
        double value = rs.getDouble(column);
        return rs.wasNull() ? null : value;
    }

    static String joinFlags(List<String> flags) {
        return String.join(",", flags);
    }

    static List<String> splitFlags(String flags) {
        return flags.isEmpty() ? List.of() : Arrays.asList(flags.split(","));
    }
}
