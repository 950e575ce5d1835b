package backstate.store;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;
import static org.junit.jupiter.api.Assertions.assertTrue;

import java.time.Duration;
import java.time.Instant;
import java.util.List;
import java.util.Optional;
import org.junit.jupiter.api.Test;

class ModelCatalogueTest extends StoreContractTestBase {



    @Test
    void creating_an_existing_family_returns_false_and_keeps_the_first() {
        assertFalse(store.models().createFamily("pump", "another description", StoreFixture.T0.plusSeconds(5)));
        assertEquals(Optional.of(new FamilyRow("pump", "test pumps", StoreFixture.T0)), store.models().findFamily("pump"));
    }

    @Test
    void families_are_listed_by_name() {
        assertTrue(store.models().createFamily("fan", "", StoreFixture.T0));
        assertEquals(List.of("fan", "pump"), store.models().listFamilies().stream().map(FamilyRow::name).toList());
    }

    @Test
    void publishing_allocates_versions_one_two_three_per_family() {
        store.models().createFamily("fan", "", StoreFixture.T0);
        Instant later = StoreFixture.T0.plus(Duration.ofMinutes(1));
        assertEquals(2, store.models().publishVersion(StoreFixture.pumpVersion(), later).version());
        assertEquals(1, store.models().publishVersion(fanVersion(), later).version());
        assertEquals(3, store.models().publishVersion(StoreFixture.pumpVersion(), later).version());
        assertEquals(List.of(1, 2, 3), store.models().listVersions("pump").stream().map(ModelVersionRow::version).toList());
    }

    @Test
    void a_published_version_reads_back_field_for_field() {
        ModelVersionRow published = store.models().publishVersion(fanVersionIn("pump"), StoreFixture.T0.plusMillis(1500));
        ModelVersionRow expected = new ModelVersionRow("pump", 2, "active", "continuous", 3, 2, 0,
                "{\"doc\":true}", "{\"obs\":true}", StoreFixture.T0.plusMillis(1500));
        assertEquals(expected, published);
        assertEquals(Optional.of(expected), store.models().findVersion("pump", 2));
    }

    @Test
    void publishing_into_a_missing_family_names_the_family() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> store.models().publishVersion(fanVersion(), StoreFixture.T0));
        assertEquals("got family 'fan', expected an existing family", e.getMessage());
    }

    @Test
    void retiring_changes_only_the_status_and_is_false_for_a_missing_version() {
        assertTrue(store.models().retireVersion("pump", 1));
        assertEquals("retired", store.models().findVersion("pump", 1).orElseThrow().status());
        assertEquals(2, store.models().findVersion("pump", 1).orElseThrow().states());
        assertFalse(store.models().retireVersion("pump", 9));
    }

    @Test
    void an_impossible_version_is_refused_before_reaching_the_store() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> new NewModelVersion("pump", "hybrid", 2, 1, 1, "{}", "{}"));
        assertEquals("got timeDomain hybrid, expected 'continuous' or 'discrete'", e.getMessage());
    }

    private static NewModelVersion fanVersion() {
        return fanVersionIn("fan");
    }

    private static NewModelVersion fanVersionIn(String family) {
        return new NewModelVersion(family, "continuous", 3, 2, 0, "{\"doc\":true}", "{\"obs\":true}");
    }
}
