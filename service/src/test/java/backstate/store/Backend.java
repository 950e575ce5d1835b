package backstate.store;

/** The two engines a store contract test runs against: the embedded default and the replicas' server. */
public enum Backend {
    /** One SQLite file in a temporary folder. */
    SQLITE,
    /** A fresh database on the per-JVM embedded PostgreSQL server ({@link PostgresServer}). */
    POSTGRESQL
}
