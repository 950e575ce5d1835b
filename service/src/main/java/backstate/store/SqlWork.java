package backstate.store;

import java.sql.SQLException;

/** Work done on one connection's statements, inside a transaction when it writes. */
@FunctionalInterface
interface SqlWork<T> {
    T run(Statements statements) throws SQLException;
}
