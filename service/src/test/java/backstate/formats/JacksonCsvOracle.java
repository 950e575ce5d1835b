package backstate.formats;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.dataformat.csv.CsvMapper;
import com.fasterxml.jackson.dataformat.csv.CsvParser;
import com.fasterxml.jackson.dataformat.csv.CsvSchema;
import java.io.IOException;
import java.math.BigDecimal;
import java.nio.ByteBuffer;
import java.nio.charset.CharacterCodingException;
import java.nio.charset.CodingErrorAction;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;

/**
 * The oracle for the CSV trace reader, built from outside parts: the JDK's strict UTF-8 decoder,
 * jackson-dataformat-csv for RFC 4180 records (quotes, "" escapes, CRLF, LF or CR line ends, a
 * quoted line break inside a field), {@link BigDecimal}'s grammar for "a plain decimal number"
 * and {@link Double#parseDouble} for its value. Only the trace's own rules come from the project:
 * the header names time and the model's channels ({@link TraceColumns}, which also assembles and
 * checks the columns), a blank cell is a missing output, a field holds at most 256 characters.
 *
 * <p>It answers what a body holds, or that it is refused, not in which words: the reader's
 * words are checked by {@link CsvFastPathTest} itself. Where jackson-dataformat-csv reads more
 * than RFC 4180 asks, the difference is named in {@link CsvFastPathTest}.
 */
final class JacksonCsvOracle {
    /** The reader's documented bound on a field, in characters (hostile input beyond it). */
    static final int MAX_FIELD_LENGTH = 256;
    /** Without a schema, each record is a JSON-like array of strings. */
    private static final CsvMapper CSV = CsvMapper.builder()
            // A blank line reads as one null field, a quoted empty field as "": only the first is skipped.
            .enable(CsvParser.Feature.EMPTY_UNQUOTED_STRING_AS_NULL)
            .build();

    private JacksonCsvOracle() {
    }

    /** The trace the body holds; an {@link InputException} (or the model's check) when it is refused. */
    static ParsedTrace readCsv(byte[] body, ModelDocument model, Limits limits) throws IOException {
        List<List<String>> records = records(strictUtf8(body));
        if (records.isEmpty()) {
            throw refused("no header");
        }
        TraceColumns columns = new TraceColumns(model, limits);
        List<String> header = records.get(0);
        DoubleColumn[] targets = new DoubleColumn[header.size()];
        boolean[] missingAllowed = new boolean[header.size()];
        int time = -1;
        for (int i = 0; i < header.size(); i++) {
            String name = header.get(i).trim();
            String field = "header[" + i + "]";
            if (name.equals("time") || name.startsWith("time since ")) {
                if (time >= 0) {
                    throw refused("two time columns");
                }
                time = i;
                if (!name.equals("time")) {
                    columns.times().declareStart(declaredStart(name.substring("time since ".length()).trim()), field);
                }
            } else if (columns.isOutput(name)) {
                targets[i] = columns.output(name, field);
                missingAllowed[i] = true;
            } else if (columns.isInput(name)) {
                targets[i] = columns.input(name, field);
            } else {
                throw refused("unknown column " + name);
            }
        }
        if (time < 0) {
            throw refused("no time column");
        }
        long line = 1;
        for (List<String> row : records.subList(1, records.size())) {
            line++;
            if (row.size() != targets.length) {
                throw refused(row.size() + " fields");
            }
            for (int i = 0; i < targets.length; i++) {
                if (i == time) {
                    // Time cells through the reader's general time path (RFC 3339 or seconds), not the fast one.
                    TraceReader.csvTime(row.get(i), TraceReader.timeField(line), columns.times());
                } else {
                    targets[i].add(number(row.get(i), missingAllowed[i]));
                }
            }
        }
        return new ParsedTrace(columns.assemble(), TraceOptions.NONE);
    }

    /** Records as jackson-dataformat-csv splits them, blank lines left out, every field within the length bound. */
    static List<List<String>> records(String text) throws IOException {
        List<List<String>> records = new ArrayList<>();
        try (JsonParser parser = CSV.getFactory().createParser(text)) {
            ((CsvParser) parser).setSchema(CsvSchema.emptySchema());
            JsonToken token;
            List<String> record = null;
            while ((token = parser.nextToken()) != null) {
                if (token == JsonToken.START_ARRAY) {
                    record = new ArrayList<>();
                } else if (token == JsonToken.END_ARRAY) {
                    boolean blankLine = record.size() == 1 && record.get(0) == null;
                    if (!blankLine) {
                        records.add(record.stream().map(f -> f == null ? "" : f).toList());
                    }
                } else {
                    String value = token == JsonToken.VALUE_NULL ? null : parser.getText();
                    if (value != null && value.length() > MAX_FIELD_LENGTH) {
                        throw refused("a field longer than " + MAX_FIELD_LENGTH + " characters");
                    }
                    record.add(value);
                }
            }
        } catch (com.fasterxml.jackson.core.JsonProcessingException | RuntimeException e) {
            if (e instanceof InputException input) {
                throw input;
            }
            throw refused("malformed CSV: " + e.getMessage()); // an unclosed quote, text after a closing quote
        }
        return records;
    }

    /** A cell: blank is missing where allowed; otherwise ASCII in BigDecimal's grammar, valued by parseDouble, finite. */
    private static double number(String cell, boolean missingAllowed) {
        String s = cell.trim();
        if (s.isEmpty()) {
            if (missingAllowed) {
                return Double.NaN;
            }
            throw refused("an empty cell");
        }
        if (!StandardCharsets.US_ASCII.newEncoder().canEncode(s)) {
            throw refused("a non-ASCII cell"); // BigDecimal also takes other scripts' digits; a decimal here is ASCII
        }
        try {
            new BigDecimal(s);
        } catch (NumberFormatException e) {
            throw refused("not a decimal: " + s);
        }
        double v = Double.parseDouble(s);
        if (!Double.isFinite(v)) {
            throw refused("not finite: " + s);
        }
        if (Math.abs(v) > Limits.MAX_MAGNITUDE) {
            throw refused("beyond the magnitude limit: " + s);
        }
        return v;
    }

    private static String strictUtf8(byte[] body) {
        try {
            return StandardCharsets.UTF_8.newDecoder().onMalformedInput(CodingErrorAction.REPORT)
                    .onUnmappableCharacter(CodingErrorAction.REPORT).decode(ByteBuffer.wrap(body)).toString();
        } catch (CharacterCodingException e) {
            throw refused("malformed UTF-8");
        }
    }

    /** The declared start, read by java.time (RFC 3339 is a profile of ISO 8601). */
    private static java.time.Instant declaredStart(String text) {
        try {
            return java.time.OffsetDateTime.parse(text).toInstant();
        } catch (java.time.format.DateTimeParseException e) {
            throw refused("a start that is not an RFC 3339 time");
        }
    }

    private static InputException refused(String why) {
        return new InputException("oracle", why);
    }
}
