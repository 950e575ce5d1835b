package backstate.store;

import java.nio.file.Path;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.io.TempDir;

/** A fresh {@link StoreFixture} in a temporary folder for each test, closed after it. */
public abstract class StoreTestBase {
    @TempDir
    protected Path dir;
    protected StoreFixture fx;
    protected SqliteDatabase store;

    @BeforeEach
    void openStore() {
        fx = new StoreFixture(dir);
        store = fx.store;
    }

    @AfterEach
    void closeStore() {
        fx.close();
    }
}
