package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;

import com.fasterxml.jackson.databind.ObjectMapper;
import org.junit.jupiter.api.Test;

/** A model document's processNoise: read into the engine model, or refused with 400 naming the field. */
class ModelDocumentProcessNoiseTest {
    static final String HEAD = """
            {"timeDomain": "continuous", "states": [{"name": "x"}, {"name": "v"}], "outputs": [{"name": "y"}],
             "a": [[0, 1], [-1, -0.1]], "c": [[1, 0]]""";

    @Test
    void per_state_noise_becomes_the_diagonal() throws Exception {
        double[] q = model(", \"processNoise\": {\"perState\": [0, 0.5]}}").toModel(Limits.DEFAULTS).processNoise();
        assertArrayEquals(new double[] {0, 0, 0, 0.5}, q, 0.0);
    }

    @Test
    void a_full_matrix_is_kept_as_written() throws Exception {
        double[] q = model(", \"processNoise\": {\"matrix\": [[1, 0.2], [0.2, 0.5]]}}").toModel(Limits.DEFAULTS)
                .processNoise();
        assertArrayEquals(new double[] {1, 0.2, 0.2, 0.5}, q, 0.0);
    }

    @Test
    void a_model_without_process_noise_has_none() throws Exception {
        assertNull(model("}").toModel(Limits.DEFAULTS).processNoise());
    }

    @Test
    void bad_process_noise_is_refused_naming_the_field() throws Exception {
        assertEquals("processNoise.matrix[0][1]", refused("{\"matrix\": [[1, 0.2], [0.3, 0.5]]}"));
        assertEquals("processNoise.matrix", refused("{\"matrix\": [[1, 2], [2, 1]]}"));
        assertEquals("processNoise.matrix[1]", refused("{\"matrix\": [[1, 0], [0]]}"));
        assertEquals("processNoise.matrix", refused("{\"matrix\": [[1, 0]]}"));
        assertEquals("processNoise.perState", refused("{\"perState\": [1]}"));
        assertEquals("processNoise.perState[1]", refused("{\"perState\": [1, -0.5]}"));
        assertEquals("processNoise", refused("{\"perState\": [1, 1], \"matrix\": [[1, 0], [0, 1]]}"));
        assertEquals("processNoise", refused("{}"));
    }

    private static String refused(String noise) throws Exception {
        ModelDocument doc = model(", \"processNoise\": " + noise + "}");
        return assertThrows(InputException.class, () -> doc.toModel(Limits.DEFAULTS)).field();
    }

    private static ModelDocument model(String tail) throws Exception {
        ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
        return mapper.readValue(HEAD + tail, ModelDocument.class);
    }
}
