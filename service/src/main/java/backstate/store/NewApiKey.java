package backstate.store;

/** An API key about to be stored: its ID, role, scope, label and salted hash (never the key). */
public record NewApiKey(String id, String role, String unitPattern, String label, byte[] salt, byte[] hash,
                        String createdByOrNull) {

    public NewApiKey {
        Expect.notBlank("id", id);
        Expect.notBlank("role", role);
        Expect.notBlank("label", label);
        Expect.notNull("salt", salt);
        Expect.notNull("hash", hash);
    }
}
