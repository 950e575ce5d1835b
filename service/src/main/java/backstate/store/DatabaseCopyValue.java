package backstate.store;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.ByteBuffer;
import java.nio.charset.StandardCharsets;
import java.security.MessageDigest;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.sql.Types;
import java.util.ArrayList;
import java.util.Collections;
import java.util.List;
import java.util.Locale;

/**
 * The kinds of column value {@link DatabaseCopy} moves from SQLite to PostgreSQL: how each is
 * read, bound, and fed to the checksum. The checksum's encoding of a value is the same on both
 * engines by construction: a NULL is the byte 0; any other value the byte 1 and then its text as
 * UTF-8 with its length, an integer's 8 bytes, a double's exact bits (so 0.1 and the next double
 * up differ), a byte string with its length, or a JSON document's canonical text.
 */
enum DatabaseCopyValue {
    /** TEXT on both engines, JSON documents kept as text included: compared by their exact text. */
    TEXT(Types.VARCHAR),
    /** INTEGER on SQLite; INTEGER or BIGINT (epoch milliseconds) on PostgreSQL. */
    INTEGER(Types.BIGINT),
    /** REAL on SQLite, DOUBLE PRECISION on PostgreSQL: both IEEE 754 doubles. */
    REAL(Types.DOUBLE),
    /** BLOB on SQLite, BYTEA on PostgreSQL. */
    BYTES(Types.BINARY),
    /**
     * jobs.errors: TEXT holding JSON on SQLite, JSONB on PostgreSQL, which keeps a parsed form and
     * gives back its own spacing; compared by a canonical text of the parsed document.
     */
    JSON(Types.VARCHAR);

    private static final byte NULL = 0;
    private static final byte PRESENT = 1;
    private static final ObjectMapper JSON_READER = new ObjectMapper()
            .enable(DeserializationFeature.USE_BIG_DECIMAL_FOR_FLOATS);

    private final int sqlType;

    DatabaseCopyValue(int sqlType) {
        this.sqlType = sqlType;
    }

    static DatabaseCopyValue named(String name) {
        return valueOf(name.toUpperCase(Locale.ROOT));
    }

    /** The insert's parameter: the JSONB column takes its text through a cast. */
    String parameter() {
        return this == JSON ? "CAST(? AS jsonb)" : "?";
    }

    /** The column's value as String, Long, Double or byte[], or null for SQL NULL. */
    Object read(ResultSet rs, int column) throws SQLException {
        Object value = switch (this) {
            case TEXT, JSON -> rs.getString(column);
            case INTEGER -> rs.getLong(column);
            case REAL -> rs.getDouble(column);
            case BYTES -> rs.getBytes(column);
        };
        return rs.wasNull() ? null : value;
    }

    void bind(PreparedStatement ps, int parameter, Object value) throws SQLException {
        if (value == null) {
            ps.setNull(parameter, sqlType);
            return;
        }
        switch (this) {
            case TEXT, JSON -> ps.setString(parameter, (String) value);
            case INTEGER -> ps.setLong(parameter, (Long) value);
            case REAL -> ps.setDouble(parameter, (Double) value);
            case BYTES -> ps.setBytes(parameter, (byte[]) value);
        }
    }

    /** Roughly what the value holds in memory, to bound a batch by bytes as well as by rows. */
    long size(Object value) {
        if (value instanceof String s) {
            return 2L * s.length();
        }
        return value instanceof byte[] b ? b.length : Long.BYTES;
    }

    /** Feeds the value's canonical encoding (see the type's comment) to the digest. */
    void digest(MessageDigest digest, Object value) {
        if (value == null) {
            digest.update(NULL);
            return;
        }
        digest.update(PRESENT);
        switch (this) {
            case TEXT -> lengthAndBytes(digest, ((String) value).getBytes(StandardCharsets.UTF_8));
            case JSON -> lengthAndBytes(digest, canonicalJson((String) value).getBytes(StandardCharsets.UTF_8));
            case INTEGER -> digest.update(ByteBuffer.allocate(Long.BYTES).putLong((Long) value).array());
            case REAL -> digest.update(ByteBuffer.allocate(Long.BYTES)
                    .putLong(Double.doubleToLongBits((Double) value)).array());
            case BYTES -> lengthAndBytes(digest, (byte[]) value);
        }
    }

    /**
     * The document without whitespace, object keys sorted, numbers in their shortest plain decimal
     * form: what stays of a JSON text once PostgreSQL has stored it as JSONB and written it back.
     * Text that is not JSON stays as it is (SQLite's CHECK admits only arrays, so it cannot occur).
     */
    static String canonicalJson(String text) {
        try {
            StringBuilder out = new StringBuilder(text.length());
            canonical(JSON_READER.readTree(text), out);
            return out.toString();
        } catch (JsonProcessingException notJson) {
            return text;
        }
    }

    private static void canonical(JsonNode node, StringBuilder out) {
        if (node.isObject()) {
            List<String> names = new ArrayList<>();
            node.fieldNames().forEachRemaining(names::add);
            Collections.sort(names);
            out.append('{');
            for (int i = 0; i < names.size(); i++) {
                out.append(i == 0 ? "" : ",").append(JSON_READER.getNodeFactory().textNode(names.get(i))).append(':');
                canonical(node.get(names.get(i)), out);
            }
            out.append('}');
        } else if (node.isArray()) {
            out.append('[');
            for (int i = 0; i < node.size(); i++) {
                out.append(i == 0 ? "" : ",");
                canonical(node.get(i), out);
            }
            out.append(']');
        } else if (node.isNumber()) {
            out.append(node.decimalValue().stripTrailingZeros().toPlainString());
        } else {
            out.append(node); // a string (quoted and escaped as JSON), true, false or null
        }
    }

    private static void lengthAndBytes(MessageDigest digest, byte[] bytes) {
        digest.update(ByteBuffer.allocate(Integer.BYTES).putInt(bytes.length).array());
        digest.update(bytes);
    }
}
