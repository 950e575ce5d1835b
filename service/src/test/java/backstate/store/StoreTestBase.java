package backstate.store;

import java.nio.file.Path;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.io.TempDir;

/**
 * A fresh SQLite {@link StoreFixture} in a temporary folder for each test, closed after it; for
 * tests of SQLite's own machinery. Tests of the store's contract extend {@link StoreContractTestBase},
 * which runs them on both engines.
 */
public abstract class StoreTestBase {
    @TempDir
    protected Path dir;
    protected StoreFixture fx;
    protected SqliteDatabase store;

    @BeforeEach
    void openStore() {
        fx = new StoreFixture(dir);
        store = fx.sqlite();
    }

    @AfterEach
    void closeStore() {
        fx.close();
    }
}
