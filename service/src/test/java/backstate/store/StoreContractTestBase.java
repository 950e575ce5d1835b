package backstate.store;

import java.nio.file.Path;
import org.junit.jupiter.api.AfterEach;
import org.junit.jupiter.api.BeforeEach;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.Parameter;
import org.junit.jupiter.params.ParameterizedClass;
import org.junit.jupiter.params.provider.EnumSource;

/**
 * The store's contract, run once per engine: every test of a subclass runs against SQLite and
 * against PostgreSQL ({@link Backend}), each time on a fresh {@link StoreFixture} closed after it.
 * Both annotations are inherited, so a subclass states nothing but its tests.
 */
@ParameterizedClass(name = "{0}")
@EnumSource(Backend.class)
public abstract class StoreContractTestBase {
    @Parameter
    protected Backend backend;
    @TempDir
    protected Path dir;
    protected StoreFixture fx;
    protected Database store;

    @BeforeEach
    void openStore() {
        fx = new StoreFixture(dir, backend);
        store = fx.store;
    }

    @AfterEach
    void closeStore() {
        fx.close();
    }
}
