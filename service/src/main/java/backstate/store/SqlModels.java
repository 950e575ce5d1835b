package backstate.store;

import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.time.Instant;
import java.util.List;
import java.util.Optional;

/** Model families and versions: named statements and the transactions that use them. */
final class SqlModels implements ModelCatalogue {

    private static final String VERSION_COLUMNS = "family, version, status, time_domain, states, outputs, inputs,"
            + " document_json, observability_json, created_at";

    // ON CONFLICT ... DO NOTHING reads the same on SQLite (3.24+) and PostgreSQL.
    private static final String CREATE_FAMILY = """
            INSERT INTO model_families (name, description, created_at) VALUES (?, ?, ?)
            ON CONFLICT (name) DO NOTHING""";
    private static final String FIND_FAMILY =
            "SELECT name, description, created_at FROM model_families WHERE name = ?";
    private static final String LIST_FAMILIES =
            "SELECT name, description, created_at FROM model_families ORDER BY name";
    // max + 1 inside the write transaction. SQLite's single writer makes this race-free. On
    // PostgreSQL two concurrent publishes may compute the same number: the second hits the
    // primary key (23505), and PostgresConnections runs its transaction again, now seeing the first.
    private static final String PUBLISH_VERSION = "INSERT INTO model_versions (" + VERSION_COLUMNS + ")"
            + " SELECT ?, COALESCE(MAX(version), 0) + 1, 'active', ?, ?, ?, ?, ?, ?, ?"
            + " FROM model_versions WHERE family = ?"
            + " RETURNING version";
    private static final String FIND_VERSION =
            "SELECT " + VERSION_COLUMNS + " FROM model_versions WHERE family = ? AND version = ?";
    private static final String LIST_VERSIONS =
            "SELECT " + VERSION_COLUMNS + " FROM model_versions WHERE family = ? ORDER BY version";
    private static final String RETIRE_VERSION =
            "UPDATE model_versions SET status = 'retired' WHERE family = ? AND version = ?";

    private final Connections db;

    SqlModels(Connections db) {
        this.db = db;
    }

    @Override
    public boolean createFamily(String name, String description, Instant now) {
        Expect.notBlank("name", name);
        Expect.notNull("description", description);
        return db.write(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(CREATE_FAMILY),
                    name, description, Sql.millis(now));
            return ps.executeUpdate() == 1;
        });
    }

    @Override
    public Optional<FamilyRow> findFamily(String name) {
        return db.read(c -> Optional.ofNullable(findFamily(c, name)));
    }

    @Override
    public List<FamilyRow> listFamilies() {
        return db.read(c -> {
            PreparedStatement ps = c.prepare(LIST_FAMILIES);
            return Sql.list(ps, SqlModels::familyRow);
        });
    }

    @Override
    public ModelVersionRow publishVersion(NewModelVersion v, Instant now) {
        Expect.notNull("model version", v);
        return db.write(c -> {
            if (findFamily(c, v.family()) == null) {
                throw new IllegalArgumentException("got family '" + v.family() + "', expected an existing family");
            }
            int version = insertNextVersion(c, v, now);
            return findVersion(c, v.family(), version);
        });
    }

    @Override
    public Optional<ModelVersionRow> findVersion(String family, int version) {
        return db.read(c -> Optional.ofNullable(findVersion(c, family, version)));
    }

    @Override
    public List<ModelVersionRow> listVersions(String family) {
        return db.read(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(LIST_VERSIONS), family);
            return Sql.list(ps, SqlModels::versionRow);
        });
    }

    @Override
    public boolean retireVersion(String family, int version) {
        return db.write(c -> {
            PreparedStatement ps = Sql.bind(c.prepare(RETIRE_VERSION), family, version);
            return ps.executeUpdate() == 1;
        });
    }

    /** Looks a version up on the caller's connection, so a write transaction sees its own rows. */
    static ModelVersionRow findVersion(Statements c, String family, int version) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(FIND_VERSION), family, version);
        return Sql.firstOrNull(ps, SqlModels::versionRow);
    }

    private static FamilyRow findFamily(Statements c, String name) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(FIND_FAMILY), name);
        return Sql.firstOrNull(ps, SqlModels::familyRow);
    }

    private static int insertNextVersion(Statements c, NewModelVersion v, Instant now) throws SQLException {
        PreparedStatement ps = Sql.bind(c.prepare(PUBLISH_VERSION), v.family(), v.timeDomain(),
                v.states(), v.outputs(), v.inputs(), v.documentJson(), v.observabilityJson(), Sql.millis(now),
                v.family());
        return Sql.firstOrNull(ps, rs -> rs.getInt("version"));
    }

    private static FamilyRow familyRow(ResultSet rs) throws SQLException {
        return new FamilyRow(rs.getString("name"), rs.getString("description"), Sql.instant(rs, "created_at"));
    }

    private static ModelVersionRow versionRow(ResultSet rs) throws SQLException {
        return new ModelVersionRow(rs.getString("family"), rs.getInt("version"), rs.getString("status"),
                rs.getString("time_domain"), rs.getInt("states"), rs.getInt("outputs"), rs.getInt("inputs"),
                rs.getString("document_json"), rs.getString("observability_json"), Sql.instant(rs, "created_at"));
    }
}
