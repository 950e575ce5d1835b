package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertArrayEquals;
import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertNull;
import static org.junit.jupiter.api.Assertions.assertThrows;

import backstate.estimation.ModelException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.nio.file.Files;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;

/** A model matrix entry that is not a number is refused in plain words naming it, never in the parser's. */
class MatrixReaderTest {
    static final ObjectMapper STRICT = Json.mapper(Limits.DEFAULTS);
    static final String TWO_STATES = "{\"timeDomain\":\"continuous\",\"states\":[{\"name\":\"seen\",\"unit\":\"degC\"},"
            + "{\"name\":\"hidden\",\"unit\":\"degC\"}],\"outputs\":[{\"name\":\"probe\",\"unit\":\"degC\"}],";

    static MatrixEntryException refused(String matrices) {
        return assertThrows(MatrixEntryException.class, () -> STRICT.readValue(TWO_STATES + matrices + "}", ModelDocument.class));
    }

    @Test
    void a_null_entry_is_named_with_its_row_and_column() {
        MatrixEntryException e = refused("\"a\":[[-0.001,0],[0,null]],\"c\":[[1,0]]");
        assertEquals("a[1][1]", e.field());
        assertEquals("got null, expected a number", e.problem());
        assertEquals("a[1][1]: got null, expected a number", e.getMessage(), "no reference chain, no parser words");
    }

    @Test
    void text_booleans_objects_and_missing_rows_are_named_as_what_they_are() {
        assertEquals("c[0][1]: got the text \"0\", expected a number", refused("\"a\":[[0,0],[0,0]],\"c\":[[1,\"0\"]]").getMessage());
        assertEquals("a[0][0]: got the boolean true, expected a number", refused("\"a\":[[true,0],[0,0]],\"c\":[[1,0]]").getMessage());
        assertEquals("a[1][0]: got an object, expected a number", refused("\"a\":[[0,0],[{},0]],\"c\":[[1,0]]").getMessage());
        assertEquals("b[0]: got the number 2, expected a row (an array of numbers)",
                refused("\"a\":[[0,0],[0,0]],\"b\":[2],\"c\":[[1,0]]").getMessage());
        assertEquals("d: got the text \"none\", expected an array of rows",
                refused("\"a\":[[0,0],[0,0]],\"c\":[[1,0]],\"d\":\"none\"").getMessage());
    }

    @Test
    void a_number_beyond_the_double_range_is_named_as_written() {
        assertEquals("a[0][1]: got the number -2e400, beyond what a double holds, expected a finite number",
                refused("\"a\":[[0,-2e400],[0,0]],\"c\":[[1,0]]").getMessage());
    }

    @Test
    void a_name_used_twice_points_at_its_first_use_and_a_bad_sigma_at_its_output() throws Exception {
        ModelDocument twice = STRICT.readValue("{\"timeDomain\":\"continuous\",\"states\":[{\"name\":\"x\",\"unit\":\"K\"},"
                + "{\"name\":\"x\",\"unit\":\"K\"}],\"outputs\":[{\"name\":\"y\",\"unit\":\"K\"}],"
                + "\"a\":[[-1,0],[0,-1]],\"c\":[[1,0]]}", ModelDocument.class);
        InputException dup = assertThrows(InputException.class, () -> twice.toModel(Limits.DEFAULTS));
        assertEquals("states[1].name", dup.field());
        assertEquals("got \"x\", already the name at states[0].name, expected unique names", dup.problem());
        ModelDocument negative = STRICT.readValue(TWO_STATES.replace("\"probe\",\"unit\":\"degC\"}", "\"probe\",\"unit\":\"degC\",\"noiseSigma\":-0.1}")
                + "\"a\":[[-1,0],[0,-1]],\"c\":[[1,0]]}", ModelDocument.class);
        InputException sigma = assertThrows(InputException.class, () -> negative.toModel(Limits.DEFAULTS));
        assertEquals("outputs[0].noiseSigma", sigma.field());
        assertEquals("got -0.1, expected a finite number > 0", sigma.problem());
        ModelDocument onState = STRICT.readValue(TWO_STATES.replace("\"hidden\",\"unit\":\"degC\"}",
                "\"hidden\",\"unit\":\"degC\",\"noiseSigma\":0.5}") + "\"a\":[[-1,0],[0,-1]],\"c\":[[1,0]]}", ModelDocument.class);
        InputException state = assertThrows(InputException.class, onState::requirePublishable);
        assertEquals("states[1].noiseSigma", state.field());
        assertEquals("got 0.5, expected none: a noise σ belongs to an output; for noise driving the states, give processNoise",
                state.problem());
    }

    @Test
    void a_null_row_is_left_to_the_shape_check() throws Exception {
        ModelDocument doc = STRICT.readValue(TWO_STATES + "\"a\":[[0,0],null],\"c\":[[1,0]]}", ModelDocument.class);
        assertNull(doc.a()[1]);
        assertEquals("a[1]", assertThrows(ModelException.class, () -> doc.toModel(Limits.DEFAULTS)).field());
    }

    /** Every matrix of both demo models reads exactly as Jackson's own double[][] reader reads it (the outside check). */
    @Test
    void valid_matrices_read_exactly_as_the_parser_reads_them() throws Exception {
        ObjectMapper plain = new ObjectMapper();
        for (int v = 1; v <= 2; v++) {
            Path file = Path.of(System.getProperty("backstate.testData", "../test-data"), "demo/models/reefer-40.v" + v + ".json");
            ModelDocument doc = STRICT.readValue(Files.readAllBytes(file), ModelDocument.class);
            JsonNode tree = plain.readTree(file.toFile());
            assertArrayEquals(plain.treeToValue(tree.get("a"), double[][].class), doc.a());
            assertArrayEquals(plain.treeToValue(tree.get("b"), double[][].class), doc.b());
            assertArrayEquals(plain.treeToValue(tree.get("c"), double[][].class), doc.c());
            assertArrayEquals(plain.treeToValue(tree.get("d"), double[][].class), doc.d());
            assertFalse(doc.a().length == 0);
        }
    }
}
