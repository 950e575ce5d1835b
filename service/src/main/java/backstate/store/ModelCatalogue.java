package backstate.store;

import java.time.Instant;
import java.util.List;
import java.util.Optional;

/**
 * Model families and their published versions. Versions are immutable once published; a version
 * is only ever retired.
 *
 * <p>Failures, as for every store interface: a database that cannot serve right now (busy,
 * locked, disk full, read-only) raises {@link StoreUnavailableException}; any other database
 * failure raises {@link StoreException} and means a bug. Arguments that break a documented
 * precondition raise {@link IllegalArgumentException} naming what was got and what was expected.
 * Implementations are safe for concurrent use.
 */
public interface ModelCatalogue {

    /** Creates a family; returns false, changing nothing, if one with that name exists. */
    boolean createFamily(String name, String description, Instant now);

    Optional<FamilyRow> findFamily(String name);

    /** All families, by name. */
    List<FamilyRow> listFamilies();

    /**
     * Publishes the next version of an existing family, numbered max + 1 in the same
     * transaction, with status 'active'.
     *
     * @throws IllegalArgumentException if the family does not exist
     */
    ModelVersionRow publishVersion(NewModelVersion v, Instant now);

    Optional<ModelVersionRow> findVersion(String family, int version);

    /** The family's versions, oldest first; empty if the family does not exist. */
    List<ModelVersionRow> listVersions(String family);

    /** Marks a version retired (idempotent); false if there is no such version. */
    boolean retireVersion(String family, int version);
}
