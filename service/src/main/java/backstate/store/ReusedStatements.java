package backstate.store;

import java.lang.reflect.InvocationHandler;
import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Method;
import java.lang.reflect.Proxy;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.SQLException;
import java.util.HashMap;
import java.util.Map;

/**
 * The write connection with its prepared statements kept for reuse: the named statements run on
 * every post and job, and sqlite-jdbc compiles a statement again on every
 * {@code prepareStatement} (about a quarter of the writer's CPU per trace, measured 2026-12-02).
 *
 * <p>{@code prepareStatement(sql)} hands out the kept statement for that text when it is not in
 * use, and its {@code close()} only clears the parameters, so callers keep their
 * try-with-resources. A statement already in use (the same text twice at once) gets a fresh one
 * that closes for real, and so does a kept one after any call on it threw: SQLite may have left
 * it mid-step. Only the writer's leader uses the connection, one thread at a time
 * ({@link SqliteWriter}); closing the connection closes every kept statement.
 */
final class ReusedStatements implements InvocationHandler {
    private final Connection connection;
    private final Map<String, Kept> kept = new HashMap<>();

    private ReusedStatements(Connection connection) {
        this.connection = connection;
    }

    static Connection wrap(Connection connection) {
        return proxy(Connection.class, new ReusedStatements(connection));
    }

    @Override
    public Object invoke(Object proxy, Method method, Object[] args) throws Throwable {
        if (method.getName().equals("prepareStatement") && args != null && args.length == 1) {
            return checkOut((String) args[0]);
        }
        if (method.getName().equals("close")) {
            closeKept();
        }
        return call(connection, method, args);
    }

    private PreparedStatement checkOut(String sql) throws SQLException {
        Kept k = kept.get(sql);
        if (k == null || k.broken) {
            if (k != null) {
                kept.remove(sql);
            }
            k = new Kept(connection.prepareStatement(sql));
            kept.put(sql, k);
        } else if (k.inUse) {
            return connection.prepareStatement(sql);
        }
        k.inUse = true;
        return k.handle;
    }

    private void closeKept() {
        for (Kept k : kept.values()) {
            try {
                k.statement.close();
            } catch (SQLException ignored) {
                // Closing is best effort; the connection closes next.
            }
        }
        kept.clear();
    }

    /** One kept statement and the handle callers see: its close() returns it for reuse. */
    private static final class Kept implements InvocationHandler {
        final PreparedStatement statement;
        final PreparedStatement handle;
        boolean inUse;
        boolean broken;

        Kept(PreparedStatement statement) {
            this.statement = statement;
            this.handle = proxy(PreparedStatement.class, this);
        }

        @Override
        public Object invoke(Object proxy, Method method, Object[] args) throws Throwable {
            if (method.getName().equals("close")) {
                release();
                return null;
            }
            if (method.getName().equals("isClosed")) {
                return !inUse || statement.isClosed();
            }
            try {
                return call(statement, method, args);
            } catch (SQLException | RuntimeException e) {
                broken = true;
                throw e;
            }
        }

        private void release() throws SQLException {
            inUse = false;
            if (broken) {
                statement.close();
            } else {
                statement.clearParameters();
            }
        }
    }

    private static Object call(Object target, Method method, Object[] args) throws Throwable {
        try {
            return method.invoke(target, args);
        } catch (InvocationTargetException e) {
            throw e.getCause();
        }
    }

    private static <T> T proxy(Class<T> type, InvocationHandler handler) {
        return type.cast(Proxy.newProxyInstance(ReusedStatements.class.getClassLoader(), new Class<?>[] {type}, handler));
    }
}
