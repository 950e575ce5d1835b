package backstate.store;

import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.List;
import java.util.Optional;

/**
 * API keys (hashes only) and the one join access control needs: which unit a job is for.
 * Stateless: each statement runs on the store's connections, passed in.
 */
final class SqlApiKeys implements ApiKeyStore {

    private static final String KEY_COLUMNS =
            "id, role, unit_pattern, label, salt, hash, created_at, created_by, revoked_at";

    // ON CONFLICT ... DO NOTHING reads the same on SQLite (3.24+) and PostgreSQL.
    private static final String INSERT_KEY = "INSERT INTO api_keys (id, role, unit_pattern, label, salt, hash,"
            + " created_at, created_by) VALUES (?, ?, ?, ?, ?, ?, ?, ?) ON CONFLICT (id) DO NOTHING";
    private static final String FIND_KEY = "SELECT " + KEY_COLUMNS + " FROM api_keys WHERE id = ?";
    private static final String LIST_KEYS = "SELECT " + KEY_COLUMNS + " FROM api_keys ORDER BY created_at, id";
    // The last-admin rule sits in the statement itself. SQLite has one writer, so nothing changes
    // between the EXISTS and the update. On PostgreSQL two transactions revoking the last two
    // admin keys would each see the other's key still valid; LOCK_ACTIVE_ADMINS (with the
    // dialect's FOR UPDATE, in ID order so two revokes lock alike) makes the second wait for the
    // first to commit, and its EXISTS then sees the first revocation.
    private static final String LOCK_ACTIVE_ADMINS =
            "SELECT id FROM api_keys WHERE role = 'admin' AND revoked_at IS NULL ORDER BY id";
    private static final String REVOKE_UNLESS_LAST_ADMIN = """
            UPDATE api_keys SET revoked_at = ?
            WHERE id = ? AND revoked_at IS NULL
              AND (role <> 'admin' OR EXISTS (SELECT 1 FROM api_keys other
                                              WHERE other.role = 'admin' AND other.revoked_at IS NULL
                                                AND other.id <> api_keys.id))""";
    private static final String HAS_ACTIVE_ADMIN =
            "SELECT EXISTS (SELECT 1 FROM api_keys WHERE role = 'admin' AND revoked_at IS NULL) AS present";
    private static final String UNIT_OF_JOB =
            "SELECT t.unit_id FROM jobs j JOIN traces t ON t.id = j.trace_id WHERE j.id = ?";

    private final Connections db;
    private final String lockActiveAdmins;

    SqlApiKeys(Connections db) {
        this.db = db;
        this.lockActiveAdmins = LOCK_ACTIVE_ADMINS + db.dialect().lockRowsRead();
    }

    @Override
    public boolean insertApiKey(NewApiKey k, Instant now) {
        Expect.notNull("key", k);
        return db.write(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(INSERT_KEY), k.id(), k.role(), k.unitPattern(),
                    k.label(), k.salt(), k.hash(), Sql.millis(now), k.createdByOrNull());
            return ps.executeUpdate() == 1;
        });
    }

    @Override
    public Optional<ApiKeyRow> findApiKey(String id) {
        return db.read(c -> Optional.ofNullable(findApiKey(c, id)));
    }

    @Override
    public List<ApiKeyRow> listApiKeys() {
        return db.read(c -> {
            PreparedStatement ps = c.prepare(LIST_KEYS);
            return Sql.list(ps, SqlApiKeys::keyRow);
        });
    }

    @Override
    public KeyRevocation revokeApiKey(String id, Instant now) {
        return db.write(c -> {
            ApiKeyRow row = findApiKey(c, id);
            if (row == null) {
                return KeyRevocation.NOT_FOUND;
            }
            if (row.revoked()) {
                return KeyRevocation.ALREADY_REVOKED;
            }
            Sql.list(c.prepare(lockActiveAdmins), rs -> rs.getString(1));
            PreparedStatement ps = Sql.bind(c.prepare(REVOKE_UNLESS_LAST_ADMIN), Sql.millis(now), id);
            return ps.executeUpdate() == 1 ? KeyRevocation.REVOKED : KeyRevocation.LAST_ADMIN;
        });
    }

    @Override
    public boolean hasActiveAdminKey() {
        return db.read(c -> {
            PreparedStatement ps = c.prepare(HAS_ACTIVE_ADMIN);
            return Sql.firstOrNull(ps, rs -> rs.getBoolean("present"));
        });
    }

    @Override
    public Optional<String> unitOfJob(String jobId) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(UNIT_OF_JOB), jobId);
            return Optional.ofNullable(Sql.firstOrNull(ps, rs -> rs.getString("unit_id")));
        });
    }

    private static ApiKeyRow findApiKey(Statements c, String id) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(FIND_KEY), id);
        return Sql.firstOrNull(ps, SqlApiKeys::keyRow);
    }

    private static ApiKeyRow keyRow(ResultSet rs) throws SQLException {
        return new ApiKeyRow(rs.getString("id"), rs.getString("role"), rs.getString("unit_pattern"),
                rs.getString("label"), rs.getBytes("salt"), rs.getBytes("hash"), Sql.instant(rs, "created_at"),
                rs.getString("created_by"), Sql.instant(rs, "revoked_at"));
    }
}
