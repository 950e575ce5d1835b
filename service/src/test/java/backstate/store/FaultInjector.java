package backstate.store;

import java.lang.reflect.InvocationHandler;
import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Method;
import java.lang.reflect.Proxy;
import java.sql.Connection;
import java.sql.PreparedStatement;
import java.sql.Statement;
import org.sqlite.SQLiteErrorCode;
import org.sqlite.SQLiteException;

/**
 * Wraps the store's write connection so that its Nth storage call (an execute of any statement,
 * BEGIN and COMMIT included) fails with SQLITE_FULL without reaching the database. ROLLBACK is
 * never failed: a failing rollback is a second fault, outside what one loop step simulates.
 */
final class FaultInjector {

    private int failAt;
    private int calls;
    private boolean failed;

    /** Fails call number {@code n} (1-based) from now on; 0 disarms. */
    synchronized void failCall(int n) {
        failAt = n;
        calls = 0;
        failed = false;
    }

    synchronized boolean failedSinceArmed() {
        return failed;
    }

    Connection wrap(Connection real) {
        return proxy(Connection.class, real, (target, method, args) -> {
            Object result = invoke(target, method, args);
            if (result instanceof PreparedStatement ps) {
                return proxy(PreparedStatement.class, ps, this::countThenInvoke);
            }
            if (result instanceof Statement s) {
                return proxy(Statement.class, s, this::countThenInvoke);
            }
            return result;
        });
    }

    private Object countThenInvoke(Object target, Method method, Object[] args) throws Throwable {
        if (method.getName().startsWith("execute") && !isRollback(args)) {
            failIfDue();
        }
        return invoke(target, method, args);
    }

    private synchronized void failIfDue() throws SQLiteException {
        calls++;
        if (failAt > 0 && calls == failAt) {
            failed = true;
            throw new SQLiteException("injected: database or disk is full", SQLiteErrorCode.SQLITE_FULL);
        }
    }

    private static boolean isRollback(Object[] args) {
        return args != null && args.length > 0 && "ROLLBACK".equals(args[0]);
    }

    private interface Call {
        Object on(Object target, Method method, Object[] args) throws Throwable;
    }

    private static <T> T proxy(Class<T> type, T target, Call call) {
        InvocationHandler handler = (p, method, args) -> call.on(target, method, args);
        return type.cast(Proxy.newProxyInstance(FaultInjector.class.getClassLoader(), new Class<?>[] {type}, handler));
    }

    private static Object invoke(Object target, Method method, Object[] args) throws Throwable {
        try {
            return method.invoke(target, args);
        } catch (InvocationTargetException e) {
            throw e.getCause();
        }
    }
}
