package backstate.store;

import java.sql.Connection;
import java.sql.SQLException;

/** Work done on one connection, inside a transaction when it writes. */
@FunctionalInterface
interface SqlWork<T> {
    T run(Connection connection) throws SQLException;
}
