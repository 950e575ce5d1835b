package backstate.store;

/**
 * Stored data that cannot be read back as what was written: one damaged item (a stored JSON text
 * that is not JSON, a trace payload that does not decode), named by kind and ID, or a damaged
 * database page. Not the caller's fault and not transient: reading again reads the same bytes.
 * The HTTP layer answers it 500 {@code /problems/stored-data-corrupt} naming the item; a job
 * that meets it fails with that message instead of retrying.
 */
public class CorruptDataException extends StoreException {
    private final String item;

    /**
     * @param item what is damaged, e.g. "estimate 0f3c…" or "the database file"
     * @param reason what is wrong with it, in words
     */
    public CorruptDataException(String item, String reason, Throwable cause) {
        super(item + " is corrupt in storage: " + reason, cause);
        this.item = item;
    }

    /** What is damaged, e.g. "estimate 0f3c…". */
    public String item() {
        return item;
    }
}
