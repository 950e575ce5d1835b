package backstate.auth;

import backstate.config.Secret;
import backstate.store.ApiKeyRow;
import backstate.store.ApiKeyStore;
import java.util.Optional;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Makes sure someone can manage keys when the service starts with access control on.
 *
 * <p>A key given in {@code BACKSTATE_ADMIN_KEY} has its hash stored as an admin key the first
 * time it is seen (and is left as it is afterwards, revoked ones staying revoked). Then, if no
 * valid admin key exists at all, one is generated and its text printed once in the log: the
 * only time a key is ever logged, and it cannot be printed again since only its hash is kept.
 */
public final class FirstAdminKey {
    private static final Logger LOG = LoggerFactory.getLogger(FirstAdminKey.class);
    static final String SETTING = "BACKSTATE_ADMIN_KEY";

    private final ApiKeyStore store;
    private final ApiKeys keys;

    public FirstAdminKey(ApiKeyStore store, ApiKeys keys) {
        this.store = store;
        this.keys = keys;
    }

    /**
     * @throws IllegalArgumentException if the configured key is malformed, or its ID is stored
     *                                  with another secret or role (the message never shows the key)
     */
    public void ensure(Optional<Secret> configured) {
        configured.ifPresent(secret -> storeConfigured(secret.value()));
        if (!store.hasActiveAdminKey()) {
            ApiKeys.Issued first = keys.issue(Role.ADMIN, null, "generated at first start", null);
            LOG.warn("no valid admin key existed, so admin key {} was generated. It is shown this once and cannot be"
                    + " shown again; keep it safe, use it to issue other keys, then revoke it if you like: {}",
                    first.row().id(), first.key());
        }
    }

    private void storeConfigured(String text) {
        KeyText.Parsed key = KeyText.parse(text).orElseThrow(() -> new IllegalArgumentException("setting " + SETTING
                + ": got a value that is not a key (not shown), expected bsk_<16 hex digits>_<64 hex digits>,"
                + " e.g. from: echo bsk_$(openssl rand -hex 8)_$(openssl rand -hex 32)"));
        Optional<ApiKeyRow> stored = store.findApiKey(key.id());
        if (stored.isEmpty()) {
            keys.storeConfiguredAdmin(key, SETTING);
            LOG.info("stored the hash of {} as admin key {}", SETTING, key.id());
            return;
        }
        ApiKeyRow row = stored.get();
        if (!ApiKeys.sameKey(row, key) || !Role.ADMIN.wireName().equals(row.role())) {
            throw new IllegalArgumentException("setting " + SETTING + ": key ID " + key.id() + " is stored as "
                    + row.role() + " key with another secret or role, expected the same admin key or a new key ID");
        }
        if (row.revoked()) {
            LOG.warn("{} names admin key {}, which was revoked at {} and stays revoked: it will be refused",
                    SETTING, key.id(), row.revokedAt());
        }
    }
}
