package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Proxy;
import java.sql.Connection;
import java.sql.DriverManager;
import java.sql.PreparedStatement;
import java.sql.ResultSet;
import java.sql.SQLException;
import java.util.ArrayList;
import java.util.List;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.Test;

/** Statements kept on the write connection: compiled once, reused with fresh parameters, replaced after a failure. */
class ReusedStatementsTest {
    static final String INSERT = "INSERT INTO t (k, v) VALUES (?, ?)";
    static final String SUM = "SELECT COALESCE(SUM(v), 0) FROM t WHERE k = ?";

    Connection raw;
    final List<String> compiled = new ArrayList<>();
    Connection c;

    @BeforeEach
    void open() throws SQLException {
        raw = DriverManager.getConnection("jdbc:sqlite::memory:");
        raw.createStatement().execute("CREATE TABLE t (k TEXT NOT NULL, v INTEGER NOT NULL CHECK (v >= 0))");
        Connection counted = (Connection) Proxy.newProxyInstance(getClass().getClassLoader(), new Class<?>[] {Connection.class},
                (proxy, method, args) -> {
                    if (method.getName().equals("prepareStatement")) {
                        compiled.add((String) args[0]);
                    }
                    try {
                        return method.invoke(raw, args);
                    } catch (InvocationTargetException e) {
                        throw e.getCause();
                    }
                });
        c = ReusedStatements.wrap(counted);
    }

    @AfterEach
    void close() throws SQLException {
        c.close();
    }

    @Test
    void a_statement_is_compiled_once_and_reused_with_fresh_parameters() throws SQLException {
        for (int i = 1; i <= 5; i++) {
            insert("a", i);
        }
        insert("b", 100);
        assertEquals(15, sum("a"));
        assertEquals(100, sum("b"));
        assertEquals(List.of(INSERT, SUM), compiled);
    }

    @Test
    void the_same_text_in_use_twice_at_once_gets_a_second_statement() throws SQLException {
        insert("a", 2);
        try (PreparedStatement outer = c.prepareStatement(SUM)) {
            outer.setString(1, "a");
            assertEquals(2, sum("a"), "inner use while the outer one is open");
            try (ResultSet rs = outer.executeQuery()) {
                assertEquals(2, rs.getLong(1));
            }
        }
        assertEquals(List.of(INSERT, SUM, SUM), compiled);
        assertEquals(2, sum("a"));
        assertEquals(3, compiled.size(), "the kept one is back in use, the extra one was closed");
    }

    @Test
    void a_statement_whose_call_failed_is_closed_and_compiled_again() throws SQLException {
        assertThrows(SQLException.class, () -> insert("a", -1), "the CHECK refuses a negative value");
        insert("a", 7);
        assertEquals(7, sum("a"));
        assertEquals(List.of(INSERT, INSERT, SUM), compiled);
    }

    @Test
    void closing_the_connection_closes_the_kept_statements() throws SQLException {
        PreparedStatement handle = c.prepareStatement(SUM); // still in use
        c.close();
        assertTrue(raw.isClosed());
        assertTrue(handle.isClosed());
    }

    private void insert(String k, long v) throws SQLException {
        try (PreparedStatement ps = c.prepareStatement(INSERT)) {
            ps.setString(1, k);
            ps.setLong(2, v);
            ps.executeUpdate();
        }
    }

    private long sum(String k) throws SQLException {
        try (PreparedStatement ps = c.prepareStatement(SUM)) {
            ps.setString(1, k);
            try (ResultSet rs = ps.executeQuery()) {
                return rs.getLong(1);
            }
        }
    }
}
