package backstate.store;

/**
 * One table's verification after {@link DatabaseCopy}: its rows and SHA-256 checksum as read back
 * from the SQLite source and from the PostgreSQL target, each in primary-key order. The copy is
 * exact for the table exactly when both agree.
 *
 * @param sourceChecksum the SHA-256 over the source's rows, 64 hex digits
 * @param targetChecksum the same over the target's rows
 */
public record DatabaseCopyCheck(String table, long sourceRows, long targetRows, String sourceChecksum,
                                String targetChecksum) {

    public boolean matches() {
        return sourceRows == targetRows && sourceChecksum.equals(targetChecksum);
    }
}
