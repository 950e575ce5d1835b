package backstate.api;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * The route × role table of docs/security.md ("Who may call what"), read from the page itself so
 * the access tests check the server against the documentation and not against its own route table.
 * Rows are keyed "METHOD /path" as written between the first pair of backticks; cells are keyed by
 * the header's column names ("no key", "admin", "gateway", "reader", "pipeline").
 */
final class DocumentedAccess {
    static final Path PAGE = DocExamples.REPO.resolve("docs/security.md");
    static final String HEADER_START = "| route |";
    /** The words a cell may hold; anything else fails the test reading it. */
    static final String YES = "yes";
    static final String NO = "—";
    static final String GATEWAY_OWN_UNITS = "its units";
    static final String GATEWAY_OWN_UNITS_JOBS = "its units' jobs";

    private DocumentedAccess() {
    }

    /** Route → (column → cell), in the page's order. */
    static Map<String, Map<String, String>> table() {
        List<String> lines = lines();
        int header = indexOfHeader(lines);
        List<String> columns = cells(lines.get(header));
        Map<String, Map<String, String>> rows = new LinkedHashMap<>();
        for (int i = header + 2; i < lines.size() && lines.get(i).startsWith("|"); i++) {
            List<String> cells = cells(lines.get(i));
            if (cells.size() != columns.size()) {
                throw new AssertionError(PAGE + ": row has " + cells.size() + " cells, expected " + columns.size() + ": " + lines.get(i));
            }
            Map<String, String> row = new LinkedHashMap<>();
            for (int c = 1; c < columns.size(); c++) {
                row.put(columns.get(c), cells.get(c));
            }
            if (rows.put(route(cells.get(0)), row) != null) {
                throw new AssertionError(PAGE + ": route listed twice: " + cells.get(0));
            }
        }
        return rows;
    }

    /** "`GET /v1/jobs/{jobId}` (note)" → "GET /v1/jobs/{jobId}". */
    static String route(String cell) {
        int open = cell.indexOf('`');
        int close = cell.indexOf('`', open + 1);
        if (open < 0 || close < 0) {
            throw new AssertionError(PAGE + ": expected a route in backticks, got " + cell);
        }
        return cell.substring(open + 1, close);
    }

    private static int indexOfHeader(List<String> lines) {
        for (int i = 0; i < lines.size(); i++) {
            if (lines.get(i).startsWith(HEADER_START)) {
                return i;
            }
        }
        throw new AssertionError(PAGE + ": no table starting with " + HEADER_START);
    }

    private static List<String> cells(String line) {
        String inner = line.strip().substring(1, line.strip().length() - 1);
        return new ArrayList<>(Arrays.stream(inner.split("\\|", -1)).map(String::strip).toList());
    }

    private static List<String> lines() {
        try {
            return Files.readAllLines(PAGE);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
