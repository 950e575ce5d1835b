package backstate.store;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.util.Arrays;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.Test;

/** API keys through the store: stored once per ID, listed oldest first, revoked unless last admin. */
class ApiKeyStoreTest extends StoreContractTestBase {

    /** A key of {@code role} with ID {@code id} (16 characters), a salt of 1s and a hash of 2s. */
    static NewApiKey key(String id, String role) {
        byte[] salt = new byte[16];
        byte[] hash = new byte[32];
        Arrays.fill(salt, (byte) 1);
        Arrays.fill(hash, (byte) 2);
        return new NewApiKey(id, role, role.equals("gateway") ? "pump-*" : null, role + " key", salt, hash, null);
    }

    @Test
    void a_key_reads_back_field_for_field_and_its_id_is_taken_once() {
        assertTrue(store.keys().insertApiKey(key("gateway-key-0001", "gateway"), StoreFixture.T0));
        assertFalse(store.keys().insertApiKey(key("gateway-key-0001", "reader"), StoreFixture.T0.plusSeconds(1)));
        ApiKeyRow row = store.keys().findApiKey("gateway-key-0001").orElseThrow();
        assertEquals(List.of("gateway", "pump-*", "gateway key", StoreFixture.T0),
                List.of(row.role(), row.unitPattern(), row.label(), row.createdAt()));
        assertArrayEquals(key("x", "gateway").salt(), row.salt());
        assertArrayEquals(key("x", "gateway").hash(), row.hash());
        assertEquals(Optional.empty(), store.keys().findApiKey("missing-key-0001"));
    }

    @Test
    void keys_are_listed_oldest_first_then_by_id() {
        store.keys().insertApiKey(key("reader-key-0000b", "reader"), StoreFixture.T0.plusSeconds(1));
        store.keys().insertApiKey(key("reader-key-0000a", "reader"), StoreFixture.T0.plusSeconds(1));
        store.keys().insertApiKey(key("reader-key-0000c", "reader"), StoreFixture.T0);
        assertEquals(List.of("reader-key-0000c", "reader-key-0000a", "reader-key-0000b"),
                store.keys().listApiKeys().stream().map(ApiKeyRow::id).toList());
    }

    @Test
    void the_last_admin_key_cannot_be_revoked_and_revoking_twice_changes_nothing() {
        assertFalse(store.keys().hasActiveAdminKey());
        store.keys().insertApiKey(key("admin-key-000001", "admin"), StoreFixture.T0);
        store.keys().insertApiKey(key("admin-key-000002", "admin"), StoreFixture.T0);
        assertTrue(store.keys().hasActiveAdminKey());
        assertEquals(KeyRevocation.REVOKED, store.keys().revokeApiKey("admin-key-000001", StoreFixture.T0.plusSeconds(5)));
        assertEquals(KeyRevocation.ALREADY_REVOKED, store.keys().revokeApiKey("admin-key-000001", StoreFixture.T0.plusSeconds(9)));
        assertEquals(KeyRevocation.LAST_ADMIN, store.keys().revokeApiKey("admin-key-000002", StoreFixture.T0.plusSeconds(9)));
        assertEquals(KeyRevocation.NOT_FOUND, store.keys().revokeApiKey("missing-key-0001", StoreFixture.T0));
        assertEquals(StoreFixture.T0.plusSeconds(5), store.keys().findApiKey("admin-key-000001").orElseThrow().revokedAt());
        assertTrue(store.keys().hasActiveAdminKey());
    }

    @Test
    void the_unit_of_a_job_is_its_traces() throws Exception {
        Submission s = store.traces().submitTrace(StoreFixture.trace("unit-9"), null, 10, StoreFixture.T0);
        String regression = store.queue().enqueue("regression", null, "{}", StoreFixture.T0);
        assertEquals(Optional.of("unit-9"), store.keys().unitOfJob(s.jobId()));
        assertEquals(Optional.empty(), store.keys().unitOfJob(regression));
        assertEquals(Optional.empty(), store.keys().unitOfJob("no-such-job"));
    }
}
