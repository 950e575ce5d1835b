package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.List;
import org.junit.jupiter.api.Test;

/** A direction the data leave undetermined, as structured fields: names, kinds and numbers, never null. */
class UnobservableDirectionTest {
    static final ObjectMapper JSON = Json.mapper(Limits.DEFAULTS);
    static final List<UnobservableDirection.Unknown> UNKNOWNS = List.of(
            UnobservableDirection.Unknown.fromDocumentName("seen"),
            UnobservableDirection.Unknown.fromDocumentName("hidden"),
            UnobservableDirection.Unknown.fromDocumentName("offset:probe"));

    @Test
    void components_are_named_by_state_or_by_the_output_whose_offset_they_are() throws Exception {
        UnobservableDirection d = UnobservableDirection.of(new double[] {0.6, 0.0, -0.8}, UNKNOWNS);
        assertEquals("{\"components\":[{\"name\":\"seen\",\"kind\":\"state\",\"value\":0.6},"
                + "{\"name\":\"hidden\",\"kind\":\"state\",\"value\":0.0},"
                + "{\"name\":\"probe\",\"kind\":\"offset\",\"value\":-0.8}]}", JSON.writeValueAsString(d));
        assertEquals("offset:probe", d.largestComponent());
        assertEquals(d, JSON.readValue(JSON.writeValueAsString(d), UnobservableDirection.class), "reads back as written");
    }

    @Test
    void a_component_that_is_not_finite_is_named_apart_and_never_written_as_null() throws Exception {
        UnobservableDirection d = UnobservableDirection.of(new double[] {Double.NaN, 1.0, Double.POSITIVE_INFINITY}, UNKNOWNS);
        String json = JSON.writeValueAsString(d);
        assertEquals("{\"components\":[{\"name\":\"hidden\",\"kind\":\"state\",\"value\":1.0}],"
                + "\"notComputed\":[{\"name\":\"seen\",\"kind\":\"state\"},{\"name\":\"probe\",\"kind\":\"offset\"}]}", json);
        assertFalse(json.contains("null"));
    }

    @Test
    void a_direction_of_the_wrong_length_is_a_programming_error() {
        IllegalArgumentException e = assertThrows(IllegalArgumentException.class,
                () -> UnobservableDirection.of(new double[] {1.0}, UNKNOWNS));
        assertEquals("got a direction of 1 components, expected 3 (one per unknown)", e.getMessage());
    }
}
