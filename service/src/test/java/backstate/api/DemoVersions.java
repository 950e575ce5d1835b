package backstate.api;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * The demo fleet's model documents, variants of v1 made for regression tests, and the χ²/dof
 * table that test-data/demo/generate_demo.py printed (numpy least squares under v1 and under v2,
 * independent of our code; copied into test-data/demo/README.md, "Output of python3 generate_demo.py").
 */
final class DemoVersions {
    static final Path DEMO = TestServer.TEST_DATA.resolve("demo");
    /** The README table prints χ²/dof with two decimals: a value read from it is within half a unit of the last digit. */
    static final double TABLE_ROUNDING = 0.005;

    private static final Pattern TABLE_ROW = Pattern.compile(
            "^(RCX-\\d{5})\\s+(\\S+)\\s+\\d+\\s.*\\s(\\d+\\.\\d{2})\\s+(\\d+\\.\\d{2})\\s*$");

    private DemoVersions() {
    }

    /** χ²/dof under v1 and v2 for one unit, as generate_demo.py printed them. */
    record TableRow(String unitId, String scenario, double v1, double v2) {
        double delta() {
            return v2 - v1;
        }
    }

    static Map<String, TableRow> chi2Table() throws IOException {
        String readme = Files.readString(DEMO.resolve("README.md"));
        String section = readme.substring(readme.indexOf("## Output of `python3 generate_demo.py`"));
        Map<String, TableRow> rows = new LinkedHashMap<>();
        for (String line : section.split("\n")) {
            Matcher m = TABLE_ROW.matcher(line);
            if (m.matches()) {
                rows.put(m.group(1), new TableRow(m.group(1), m.group(2), Double.parseDouble(m.group(3)),
                        Double.parseDouble(m.group(4))));
            }
        }
        if (rows.size() != 20) {
            throw new AssertionError("expected 20 units in the README table, found " + rows.size());
        }
        return rows;
    }

    static ObjectNode v1(ObjectMapper mapper) throws IOException {
        return (ObjectNode) mapper.readTree(DEMO.resolve("models/reefer-40.v1.json").toFile());
    }

    /** v1 with one state renamed: the same matrices, a state space that is not comparable by name. */
    static ObjectNode v1WithStateRenamed(ObjectMapper mapper) throws IOException {
        ObjectNode doc = v1(mapper);
        ((ObjectNode) doc.get("states").get(3)).put("name", "cargo_centre");
        return doc;
    }

    /** v1 with its outputs listed supply first: the rows of c and d swapped with them, so the same model. */
    static ObjectNode v1WithOutputsSwapped(ObjectMapper mapper) throws IOException {
        ObjectNode doc = v1(mapper);
        for (String field : new String[] {"outputs", "c", "d"}) {
            ArrayNode rows = (ArrayNode) doc.get(field);
            JsonNode first = rows.get(0);
            rows.set(0, rows.get(1));
            rows.set(1, first);
        }
        return doc;
    }

    /** v1 with the supply-air output renamed: a version that measures other channels. */
    static ObjectNode v1WithOutputRenamed(ObjectMapper mapper) throws IOException {
        ObjectNode doc = v1(mapper);
        ((ObjectNode) doc.get("outputs").get(1)).put("name", "supply_air_temp");
        return doc;
    }
}
