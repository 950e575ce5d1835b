package backstate.formats;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertThrows;

import backstate.estimation.ModelException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Path;
import java.util.function.Consumer;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.CsvSource;

/**
 * A matrix whose shape disagrees with the named quantities is refused naming that matrix, not a
 * later one measured against it (a: states × states, b: states × inputs, c: outputs × states,
 * d: outputs × inputs). The demo version has 4 states, 2 outputs and 2 inputs.
 */
class ModelDocumentShapeTest {
    private static final ObjectMapper MAPPER = Json.mapper(Limits.DEFAULTS);

    @ParameterizedTest(name = "{0} {1}")
    @CsvSource(delimiter = '|', value = {
        "b | one column more   | b[0] | got 3 columns, expected 2 (one per named input)",
        "c | one row more      | c    | got 3 rows, expected 2 (one per named output)",
        "a | two rows fewer    | a    | got 2 rows, expected 4 (one per named state)",
        "d | one column fewer  | d[0] | got 1 column, expected 2 (one per named input)",
        "c | one column fewer  | c[0] | got 3 columns, expected 4 (one per named state)",
    })
    void a_matrix_of_the_wrong_shape_is_refused_naming_it(String matrix, String change, String field, String detail)
            throws Exception {
        ModelDocument document = demoWith(matrix, change);
        ModelException e = assertThrows(ModelException.class, () -> document.toModel(Limits.DEFAULTS));
        assertEquals(field, e.field());
        assertEquals(detail, e.problem());
    }

    private static ModelDocument demoWith(String matrix, String change) throws Exception {
        ObjectNode doc = (ObjectNode) MAPPER.readTree(Path.of(System.getProperty("backstate.testData", "../test-data"))
                .resolve("demo/models/reefer-40.v1.json").toFile());
        ArrayNode rows = (ArrayNode) doc.get(matrix);
        Consumer<ArrayNode> edit = switch (change) {
            case "one column more" -> r -> r.forEach(row -> ((ArrayNode) row).add(0.0));
            case "one column fewer" -> r -> r.forEach(row -> ((ArrayNode) row).remove(row.size() - 1));
            case "one row more" -> r -> r.add(r.get(0).deepCopy());
            case "two rows fewer" -> r -> {
                r.remove(r.size() - 1);
                r.remove(r.size() - 1);
            };
            default -> throw new IllegalArgumentException(change);
        };
        edit.accept(rows);
        return MAPPER.treeToValue(doc, ModelDocument.class);
    }
}
