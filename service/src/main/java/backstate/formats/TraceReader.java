package backstate.formats;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.exc.StreamConstraintsException;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.util.List;
import java.util.regex.Pattern;

/**
 * Reads a trace from a JSON body (columnar: time, outputs, inputs, noiseSigma, options) or from
 * RFC 4180 CSV (header of time + channel names, empty cell = missing), streaming, so a large
 * body is never held whole: only the primitive columns grow.
 */
public final class TraceReader {
    /** A plain decimal number; rejects the forms Java accepts but CSV writers never mean (NaN, Infinity, 1d, hex). */
    private static final Pattern DECIMAL = Pattern.compile("[-+]?(\\d+\\.?\\d*|\\.\\d+)([eE][-+]?\\d+)?");
    /**
     * Header columns accepted beyond the model's channels, so that an extra column is refused by its
     * name; a header longer still is refused by its count (hostile input, not a mistake).
     */
    static final int EXTRA_HEADER_FIELDS = 64;
    /** Longest number literal accepted in JSON; 64 digits is beyond any double's precision. */
    private static final int MAX_NUMBER_LENGTH = 64;

    private final ObjectMapper mapper;
    private final Limits limits;

    public TraceReader(Limits limits) {
        this.limits = limits;
        JsonFactory factory = JsonFactory.builder()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(limits.maxJsonDepth())
                        .maxNumberLength(MAX_NUMBER_LENGTH)
                        .maxStringLength(CsvRecords.MAX_FIELD_LENGTH * 16)
                        .maxNameLength(CsvRecords.MAX_FIELD_LENGTH)
                        .build())
                .build();
        this.mapper = new ObjectMapper(factory);
    }

    /** Reads the JSON form; unknown fields are rejected so a typo cannot silently drop data. */
    public ParsedTrace readJson(InputStream body, ModelDocument model) throws IOException {
        TraceColumns columns = new TraceColumns(model, limits);
        TraceOptions options = TraceOptions.NONE;
        try (JsonParser parser = mapper.getFactory().createParser(body)) {
            expect(parser, parser.nextToken(), JsonToken.START_OBJECT, "body");
            while (parser.nextToken() == JsonToken.FIELD_NAME) {
                String name = parser.currentName();
                parser.nextToken();
                switch (name) {
                    case "time" -> readNumbers(parser, columns.time(), "time", false);
                    case "outputs" -> readChannels(parser, columns, true);
                    case "inputs" -> readChannels(parser, columns, false);
                    case "noiseSigma" -> readSigma(parser, columns);
                    case "options" -> options = readOptions(parser);
                    default -> throw new InputException(name, "got an unknown field, expected time, outputs, inputs, noiseSigma or options");
                }
            }
            if (parser.nextToken() != null) {
                throw new InputException("body", "got data after the JSON object, expected the end");
            }
        } catch (StreamConstraintsException e) {
            throw new InputException("body", "got JSON beyond the limits: " + e.getOriginalMessage());
        } catch (JsonProcessingException e) {
            throw new InputException("body", "got malformed JSON: " + e.getOriginalMessage());
        }
        return new ParsedTrace(columns.assemble(), options);
    }

    /** Reads the CSV form; options come from elsewhere (query parameters). */
    public ParsedTrace readCsv(InputStream body, ModelDocument model, TraceOptions options) throws IOException {
        TraceColumns columns = new TraceColumns(model, limits);
        int maxFields = 1 + model.outputs().size() + model.inputsOrEmpty().size();
        CsvRecords records = new CsvRecords(body, maxFields + EXTRA_HEADER_FIELDS, maxFields);
        if (!records.next()) {
            throw new InputException("header", "got an empty body, expected a header row: time, then channel names");
        }
        List<String> header = records.texts();
        DoubleColumn[] targets = headerTargets(header, columns);
        String[] names = new String[targets.length];
        boolean[] missingAllowed = new boolean[targets.length];
        for (int i = 0; i < targets.length; i++) {
            names[i] = header.get(i).trim();
            missingAllowed[i] = targets[i] != columns.time() && columns.isOutput(names[i]);
        }
        while (records.next()) {
            if (records.size() != targets.length) {
                throw new InputException("line " + records.line(), "got " + records.size() + " fields, expected " + targets.length);
            }
            for (int i = 0; i < targets.length; i++) {
                targets[i].add(csvNumber(records, i, names[i], missingAllowed[i]));
            }
        }
        return new ParsedTrace(columns.assemble(), options);
    }

    static DoubleColumn[] headerTargets(List<String> header, TraceColumns columns) {
        DoubleColumn[] targets = new DoubleColumn[header.size()];
        boolean sawTime = false;
        for (int i = 0; i < header.size(); i++) {
            String name = header.get(i).trim();
            String field = "header[" + i + "]";
            if (name.equals("time")) {
                if (sawTime) {
                    throw new InputException(field, "got a second time column, expected one");
                }
                sawTime = true;
                targets[i] = columns.time();
            } else if (columns.isInput(name)) {
                targets[i] = columns.input(name, field);
            } else if (columns.isOutput(name)) {
                targets[i] = columns.output(name, field);
            } else {
                throw unknownColumn(field, name, columns);
            }
        }
        if (!sawTime) {
            throw new InputException("header", "got no time column, expected one named \"time\"");
        }
        return targets;
    }

    /** A header column that is neither time nor a channel of the model, named (and cut at 40 characters). */
    private static InputException unknownColumn(String field, String name, TraceColumns columns) {
        String shown = name.length() > 40 ? name.substring(0, 40) + "…" : name;
        return new InputException(field, "got an unknown column \"" + shown + "\", expected \"time\" and the model's"
                + " channels " + columns.channelNames());
    }

    /**
     * Cell i of the current record. An ASCII cell holding a short plain decimal (nearly every
     * cell) is read from its bytes; anything else goes through {@link #csvNumber(String, String, boolean)},
     * which decides and words the answer, so both paths accept, refuse and read alike.
     */
    private static double csvNumber(CsvRecords records, int i, String column, boolean missingAllowed) {
        if (records.isAscii(i)) {
            byte[] bytes = records.bytes();
            int from = records.start(i);
            int to = records.end(i);
            // String.trim's rule: drop characters up to U+0020 at both ends.
            while (from < to && (bytes[from] & 0xFF) <= ' ') {
                from++;
            }
            while (to > from && (bytes[to - 1] & 0xFF) <= ' ') {
                to--;
            }
            if (from == to && missingAllowed) {
                return Double.NaN;
            }
            double v = PlainDecimal.parse(bytes, from, to);
            if (!Double.isNaN(v)) {
                return v;
            }
        }
        return csvNumber(records.text(i), "line " + records.line() + ", column " + column, missingAllowed);
    }

    /** The general path for one cell: any text, decided by the {@code DECIMAL} pattern and {@code parseDouble}. */
    static double csvNumber(String text, String field, boolean missingAllowed) {
        String s = text.trim();
        if (s.isEmpty()) {
            if (missingAllowed) {
                return Double.NaN;
            }
            throw new InputException(field, "got an empty cell, expected a number (only outputs may be missing)");
        }
        if (!DECIMAL.matcher(s).matches()) {
            throw new InputException(field, "got \"" + (s.length() > 40 ? s.substring(0, 40) + "…" : s) + "\", expected a decimal number");
        }
        double v = Double.parseDouble(s);
        if (!Double.isFinite(v)) {
            throw new InputException(field, "got " + s + ", expected a finite number");
        }
        return v;
    }

    private static void readChannels(JsonParser parser, TraceColumns columns, boolean outputs) throws IOException {
        String group = outputs ? "outputs" : "inputs";
        expect(parser, parser.currentToken(), JsonToken.START_OBJECT, group);
        while (parser.nextToken() == JsonToken.FIELD_NAME) {
            String name = parser.currentName();
            String field = group + "." + name;
            DoubleColumn column = outputs ? columns.output(name, field) : columns.input(name, field);
            parser.nextToken();
            readNumbers(parser, column, field, outputs);
        }
    }

    private static void readNumbers(JsonParser parser, DoubleColumn column, String field, boolean nullAllowed) throws IOException {
        expect(parser, parser.currentToken(), JsonToken.START_ARRAY, field);
        JsonToken token;
        while ((token = parser.nextToken()) != JsonToken.END_ARRAY) {
            String at = field + "[" + column.size() + "]";
            if (token == JsonToken.VALUE_NULL && nullAllowed) {
                column.add(Double.NaN);
            } else if (token == JsonToken.VALUE_NUMBER_INT || token == JsonToken.VALUE_NUMBER_FLOAT) {
                double v = parser.getDoubleValue();
                if (!Double.isFinite(v)) {
                    throw new InputException(at, "got " + parser.getText() + ", expected a finite number");
                }
                column.add(v);
            } else {
                throw new InputException(at, "got " + describe(token) + ", expected a number" + (nullAllowed ? " or null" : ""));
            }
        }
    }

    private static void readSigma(JsonParser parser, TraceColumns columns) throws IOException {
        expect(parser, parser.currentToken(), JsonToken.START_OBJECT, "noiseSigma");
        while (parser.nextToken() == JsonToken.FIELD_NAME) {
            String name = parser.currentName();
            String field = "noiseSigma." + name;
            JsonToken token = parser.nextToken();
            if (token != JsonToken.VALUE_NUMBER_INT && token != JsonToken.VALUE_NUMBER_FLOAT) {
                throw new InputException(field, "got " + describe(token) + ", expected a number > 0");
            }
            double sigma = parser.getDoubleValue();
            if (!(sigma > 0.0) || !Double.isFinite(sigma)) {
                throw new InputException(field, "got " + sigma + ", expected a finite number > 0");
            }
            columns.noiseSigma(name, sigma, field);
        }
    }

    private TraceOptions readOptions(JsonParser parser) throws IOException {
        expect(parser, parser.currentToken(), JsonToken.START_OBJECT, "options");
        try {
            return mapper.readerFor(TraceOptions.class)
                    .with(com.fasterxml.jackson.databind.DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                    .readValue(parser);
        } catch (com.fasterxml.jackson.databind.exc.UnrecognizedPropertyException e) {
            throw new InputException("options" + JsonPaths.of(e), "got an unknown field \"" + e.getPropertyName()
                    + "\", expected one of " + e.getKnownPropertyIds());
        } catch (com.fasterxml.jackson.databind.JsonMappingException e) {
            throw new InputException("options" + JsonPaths.of(e), "got a value of the wrong type or shape");
        }
    }

    private static void expect(JsonParser parser, JsonToken got, JsonToken wanted, String field) {
        if (got != wanted) {
            throw new InputException(field, "got " + describe(got) + ", expected " + describe(wanted));
        }
    }

    private static String describe(JsonToken token) {
        if (token == null) {
            return "end of input";
        }
        return switch (token) {
            case START_OBJECT -> "an object";
            case START_ARRAY -> "an array";
            case VALUE_STRING -> "a string";
            case VALUE_NULL -> "null";
            case VALUE_TRUE, VALUE_FALSE -> "a boolean";
            case VALUE_NUMBER_INT, VALUE_NUMBER_FLOAT -> "a number";
            default -> token.toString();
        };
    }
}
