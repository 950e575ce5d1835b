package backstate.store;

import java.security.MessageDigest;
import java.security.NoSuchAlgorithmException;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.util.HexFormat;

/**
 * A table's row count and SHA-256 over the canonical encoding of every value of every row
 * ({@link DatabaseCopyValue}), rows in primary-key order: computed the same way on either engine,
 * streaming, so equal sums mean equal tables whatever the engine stores underneath.
 */
final class DatabaseCopyChecksum {

    /** Rows fetched per round trip on PostgreSQL (it streams only with auto-commit off); traces carry payloads. */
    static final int FETCH_ROWS = 64;

    record Sum(long rows, String sha256) {
    }

    private DatabaseCopyChecksum() {
    }

    static Sum of(Connection c, DatabaseCopyTable table, Dialect dialect) throws SQLException {
        MessageDigest digest = sha256();
        long rows = 0;
        try (PreparedStatement ps = c.prepareStatement(table.selectInKeyOrder(dialect))) {
            ps.setFetchSize(FETCH_ROWS);
            try (ResultSet rs = ps.executeQuery()) {
                while (rs.next()) {
                    rows++;
                    for (int i = 0; i < table.columns().size(); i++) {
                        DatabaseCopyValue kind = table.columns().get(i).kind();
                        kind.digest(digest, kind.read(rs, i + 1));
                    }
                }
            }
        }
        return new Sum(rows, HexFormat.of().formatHex(digest.digest()));
    }

    private static MessageDigest sha256() {
        try {
            return MessageDigest.getInstance("SHA-256");
        } catch (NoSuchAlgorithmException e) {
            throw new IllegalStateException("every Java platform has SHA-256", e);
        }
    }
}
