package backstate.auth;

import backstate.store.ApiKeyRow;
import backstate.store.KeyRevocation;
import backstate.store.NewApiKey;
import backstate.store.ApiKeyStore;
import java.security.SecureRandom;
import java.time.Clock;
import java.util.List;
import java.util.Optional;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * Issuing, checking and revoking API keys (format and hashing: {@link KeyText}). Logs name keys
 * by ID only; a key's text is returned once by {@link #issue} and never logged or stored.
 */
public final class ApiKeys {
    private static final Logger LOG = LoggerFactory.getLogger(ApiKeys.class);
    /** RFC 6750 §2.1: the scheme is case-insensitive; one or more spaces before the token. */
    private static final Pattern BEARER = Pattern.compile("(?i:bearer) +(\\S+) *");
    /** A fresh 64-bit ID colliding with a stored one is a ~n/2^64 event; a few tries make failure impossible in practice. */
    private static final int ID_TRIES = 3;

    private final ApiKeyStore store;
    private final Clock clock;
    private final SecureRandom random;

    public ApiKeys(ApiKeyStore store, Clock clock, SecureRandom random) {
        this.store = store;
        this.clock = clock;
        this.random = random;
    }

    /** A key just issued: its text, shown once to whoever asked for it, and the stored row. */
    public record Issued(String key, ApiKeyRow row) {
        @Override
        public String toString() {
            return "issued key " + row.id();
        }
    }

    /**
     * The caller an {@code Authorization: Bearer <key>} header names, or empty when the header is
     * missing, malformed, or names an unknown, wrong or revoked key (the answer is the same 401
     * for all of them; the log says which, by key ID).
     */
    public Optional<Caller> authenticate(String authorization) {
        Optional<KeyText.Parsed> parsed = bearer(authorization).flatMap(KeyText::parse);
        if (parsed.isEmpty()) {
            return Optional.empty();
        }
        String id = parsed.get().id();
        Optional<ApiKeyRow> row = store.findApiKey(id);
        if (row.isEmpty()) {
            LOG.info("refused API key {}: no such key", id);
            return Optional.empty();
        }
        ApiKeyRow k = row.get();
        if (!KeyText.matches(k.salt(), k.hash(), parsed.get().text())) {
            LOG.info("refused API key {}: wrong secret", id);
            return Optional.empty();
        }
        if (k.revoked()) {
            LOG.info("refused API key {}: revoked at {}", id, k.revokedAt());
            return Optional.empty();
        }
        Role role = Role.of(k.role());
        return Optional.of(new Caller(id, role, k.unitPattern() == null ? null : UnitPattern.of(k.unitPattern())));
    }

    /**
     * Issues a new random key and stores its hash.
     *
     * @param scopeOrNull    the gateway's units: required for gateways, null for other roles
     * @param issuedByOrNull the ID of the admin key asking, null at first start or with access control off
     */
    public Issued issue(Role role, UnitPattern scopeOrNull, String label, String issuedByOrNull) {
        for (int i = 0; i < ID_TRIES; i++) {
            KeyText.Parsed key = KeyText.generate(random);
            Optional<ApiKeyRow> row = store(key, role, scopeOrNull, label, issuedByOrNull);
            if (row.isPresent()) {
                LOG.info("issued {} key {} (label \"{}\"{}) by {}", role.wireName(), key.id(), LogText.escaped(label),
                        scopeOrNull == null ? "" : ", units " + scopeOrNull.glob(),
                        issuedByOrNull == null ? "the service" : "admin key " + issuedByOrNull);
                return new Issued(key.text(), row.get());
            }
        }
        throw new IllegalStateException("got " + ID_TRIES + " random key IDs that were all taken, expected a free one");
    }

    /** All keys, oldest first: IDs, roles, scopes and labels, never secrets. */
    public List<ApiKeyRow> list() {
        return store.listApiKeys();
    }

    public Optional<ApiKeyRow> find(String id) {
        return store.findApiKey(id);
    }

    public KeyRevocation revoke(String id, String byOrNull) {
        KeyRevocation outcome = store.revokeApiKey(id, clock.instant());
        if (outcome == KeyRevocation.REVOKED) {
            LOG.info("revoked API key {} by {}", id, byOrNull == null ? "the service" : "admin key " + byOrNull);
        }
        return outcome;
    }

    /** Stores an admin key whose text was configured (BACKSTATE_ADMIN_KEY); empty if its ID is taken. */
    Optional<ApiKeyRow> storeConfiguredAdmin(KeyText.Parsed key, String label) {
        return store(key, Role.ADMIN, null, label, null);
    }

    /** True when the text is the key stored under its ID (whatever its role or revocation). */
    static boolean sameKey(ApiKeyRow row, KeyText.Parsed key) {
        return row.id().equals(key.id()) && KeyText.matches(row.salt(), row.hash(), key.text());
    }

    private Optional<ApiKeyRow> store(KeyText.Parsed key, Role role, UnitPattern scopeOrNull, String label,
                                      String issuedByOrNull) {
        if ((role == Role.GATEWAY) != (scopeOrNull != null)) {
            throw new IllegalArgumentException("got role " + role.wireName() + " with unit pattern " + scopeOrNull
                    + ", expected a pattern exactly for gateway keys");
        }
        byte[] salt = KeyText.salt(random);
        NewApiKey row = new NewApiKey(key.id(), role.wireName(), scopeOrNull == null ? null : scopeOrNull.glob(), label,
                salt, KeyText.hash(salt, key.text()), issuedByOrNull);
        return store.insertApiKey(row, clock.instant()) ? store.findApiKey(key.id()) : Optional.empty();
    }

    private static Optional<String> bearer(String authorization) {
        if (authorization == null) {
            return Optional.empty();
        }
        Matcher m = BEARER.matcher(authorization);
        return m.matches() ? Optional.of(m.group(1)) : Optional.empty();
    }
}
