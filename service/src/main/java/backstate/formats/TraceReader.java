package backstate.formats;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.IOException;
import java.io.InputStream;
import java.io.PushbackInputStream;
import java.time.Instant;
import java.util.Arrays;
import java.util.List;
import java.util.regex.Pattern;

/**
 * Reads a trace from a JSON body (columnar: time, start, outputs, inputs, noiseSigma, options) or
 * from RFC 4180 CSV (header of time + channel names, empty cell = missing), streaming, so a large
 * body is never held whole: only the primitive columns grow.
 *
 * <p>Times ({@link TraceTimes}): RFC 3339 times, or numbers of seconds since 1970-01-01T00:00:00Z,
 * or numbers of seconds since a declared start — JSON's {@code "start"} field, or a CSV time
 * column headed {@code time since <RFC 3339 time>}. A reference time ({@code referenceTime}) is
 * an RFC 3339 time or a number on the same clock as the trace's numbers.
 */
public final class TraceReader {
    /** A plain decimal number; rejects the forms Java accepts but CSV writers never mean (NaN, Infinity, 1d, hex). */
    private static final Pattern DECIMAL = Pattern.compile("[-+]?(\\d+\\.?\\d*|\\.\\d+)([eE][-+]?\\d+)?");
    /**
     * Header columns accepted beyond the model's channels, so that an extra column is refused by its
     * name; a header longer still is refused by its count (hostile input, not a mistake).
     */
    static final int EXTRA_HEADER_FIELDS = 64;
    /** A CSV time column header declaring the start its seconds count from, before the RFC 3339 time. */
    static final String TIME_SINCE = "time since ";
    /** How a reference time may be written, besides RFC 3339. */
    private static final String SECONDS_OR = "seconds on the trace's clock or ";
    private static final byte[] BYTE_ORDER_MARK = {(byte) 0xEF, (byte) 0xBB, (byte) 0xBF};
    /** Longest number literal accepted in JSON; 64 digits is beyond any double's precision. */
    private static final int MAX_NUMBER_LENGTH = 64;

    private final ObjectMapper mapper;
    private final Limits limits;

    public TraceReader(Limits limits) {
        this.limits = limits;
        JsonFactory factory = Json.strictFactory()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(limits.maxJsonDepth())
                        .maxNumberLength(MAX_NUMBER_LENGTH)
                        .maxStringLength(CsvRecords.MAX_FIELD_LENGTH * 16)
                        .maxNameLength(CsvRecords.MAX_FIELD_LENGTH)
                        .build())
                .build();
        this.mapper = Json.withoutScalarCoercion(new ObjectMapper(factory));
    }

    /** Reads the JSON form; unknown fields are rejected so a typo cannot silently drop data. */
    public ParsedTrace readJson(InputStream body, ModelDocument model) throws IOException {
        return readJsonColumns(body, model).assemble();
    }

    /** {@link #readJson}, column by column: the trace not yet assembled. */
    public ParsedColumns readJsonColumns(InputStream body, ModelDocument model) throws IOException {
        return readJsonColumns(body, model, TraceOptions.NONE, null);
    }

    /**
     * {@link #readJsonColumns(InputStream, ModelDocument)} with each option {@code override} sets
     * taken over the body's own, and a reference time, if given, read as a CSV post's query gives it
     * (seconds on the trace's own clock, or RFC 3339) in place of the body's: what {@code backstate
     * solve}'s flags do to a JSON trace.
     */
    public ParsedColumns readJsonColumns(InputStream body, ModelDocument model, TraceOptions override,
                                         String referenceTime) throws IOException {
        TraceColumns columns = new TraceColumns(model, limits);
        TraceOptions options = TraceOptions.NONE;
        Long referenceMicros = null;
        boolean timed = false;
        try (JsonParser parser = mapper.getFactory().createParser(body)) {
            JsonToken first = parser.nextToken();
            if (first == null) {
                throw new InputException("body", "got " + JsonPaths.EMPTY_BODY + ", expected an object");
            }
            expect(parser, first, JsonToken.START_OBJECT, "body");
            while (parser.nextToken() == JsonToken.FIELD_NAME) {
                String name = parser.currentName();
                parser.nextToken();
                switch (name) {
                    case "time" -> {
                        readTimes(parser, columns.times());
                        timed = true;
                    }
                    case "start" -> columns.times().declareStart(startInstant(parser), "start");
                    case "outputs" -> readChannels(parser, columns, true);
                    case "inputs" -> readChannels(parser, columns, false);
                    case "noiseSigma" -> readSigma(parser, columns);
                    case "options" -> {
                        OptionsAsWritten written = readOptions(parser);
                        referenceMicros = written.referenceMicrosOrNull();
                        options = written.options();
                    }
                    default -> throw new InputException(name, "got an unknown field, expected time, start, outputs, inputs,"
                            + " noiseSigma or options");
                }
            }
            if (parser.nextToken() != null) {
                throw new InputException("body", JsonPaths.AFTER_DOCUMENT);
            }
        } catch (JsonProcessingException e) {
            throw JsonPaths.refusal(e, "");
        }
        if (!timed) {
            throw new InputException("time", "got nothing, expected a list of sample times, each a number of seconds or "
                    + RecordingTime.EXAMPLE);
        }
        Reference reference = Reference.of(options.overriddenBy(override.withReferenceTime(null)), referenceMicros,
                referenceTime);
        return finish(columns, reference.options(), reference.micros());
    }

    /**
     * Options with the reference time they will carry: a number of seconds on the trace's clock in
     * the options (normalised by {@link #finish}), or an RFC 3339 time's microseconds beside them.
     */
    private record Reference(TraceOptions options, Long micros) {
        /** {@code options} and {@code micros} as they are, or with {@code text} (a query's or flag's) in their place. */
        static Reference of(TraceOptions options, Long micros, String text) {
            if (text == null) {
                return new Reference(options, micros);
            }
            if (DECIMAL.matcher(text).matches()) {
                return new Reference(options.withReferenceTime(csvNumber(text, "referenceTime", false)), null);
            }
            return new Reference(options.withReferenceTime(null), stampMicros(text, "referenceTime", SECONDS_OR));
        }
    }

    /** Reads the CSV form; options come from elsewhere (query parameters), a reference time on the trace's clock. */
    public ParsedTrace readCsv(InputStream body, ModelDocument model, TraceOptions options) throws IOException {
        return readCsv(body, model, options, null);
    }

    /**
     * Reads the CSV form with a reference time as text (a query parameter): a number of seconds on
     * the trace's clock or an RFC 3339 time. Given, it takes the place of the options' own.
     */
    public ParsedTrace readCsv(InputStream body, ModelDocument model, TraceOptions options, String referenceTime)
            throws IOException {
        return readCsvColumns(body, model, options, referenceTime).assemble();
    }

    /** {@link #readCsv(InputStream, ModelDocument, TraceOptions, String)}, column by column: the trace not yet assembled. */
    public ParsedColumns readCsvColumns(InputStream body, ModelDocument model, TraceOptions options, String referenceTime)
            throws IOException {
        Reference reference = Reference.of(options, null, referenceTime);
        TraceColumns columns = new TraceColumns(model, limits);
        int maxFields = 1 + model.outputs().size() + model.inputsOrEmpty().size();
        body = withoutByteOrderMark(body);
        CsvRecords records = new CsvRecords(body, maxFields + EXTRA_HEADER_FIELDS, maxFields);
        if (!records.next()) {
            throw new InputException("header", "got an empty body, expected a header row: time, then channel names");
        }
        CsvHeader layout = headerTargets(records.texts(), columns, maxFields);
        if (records.inputInHand()) {
            layout.rows().readAll(records, columns.times(), layout.channels());
        } else {
            CsvLanes.readRest(records, body, layout.rows(), columns.times(), layout.channels(), limits.maxSamples());
        }
        return finish(columns, reference.options(), reference.micros());
    }

    /**
     * The trace's columns, and the options with their reference time on the trace's normalised clock: an
     * RFC 3339 reference time as it is, a number of seconds as the trace's numeric times are read.
     */
    private static ParsedColumns finish(TraceColumns columns, TraceOptions options, Long referenceMicrosOrNull) {
        ParsedColumns parsed = columns.finish(options);
        if (referenceMicrosOrNull != null) {
            return parsed.withOptions(options.withReferenceTime(RecordingTime.seconds(referenceMicrosOrNull)));
        }
        if (options.referenceTime() != null) {
            return parsed.withOptions(options.withReferenceTime(columns.times().normalise(options.referenceTime())));
        }
        return parsed;
    }

    /** Every column's target (null at the time column), and how the rows are read into them. */
    record CsvHeader(DoubleColumn[] channels, CsvRows rows) {
    }

    /** The header's layout; {@code maxFields} is the fields past which a row is refused by count. */
    static CsvHeader headerTargets(List<String> header, TraceColumns columns, int maxFields) {
        requireCommaSeparated(header);
        DoubleColumn[] targets = new DoubleColumn[header.size()];
        int time = -1;
        for (int i = 0; i < header.size(); i++) {
            String name = header.get(i).trim();
            String field = "header[" + i + "]";
            if (name.equals("time") || name.startsWith(TIME_SINCE)) {
                if (time >= 0) {
                    throw new InputException(field, "got a second time column, expected one");
                }
                time = i;
                if (!name.equals("time")) {
                    columns.times().declareStart(stampInstant(name.substring(TIME_SINCE.length()).trim(), field,
                            "\"time\", or \"time since\" and "), field);
                }
            } else if (columns.isInput(name)) {
                targets[i] = columns.input(name, field);
            } else if (columns.isOutput(name)) {
                targets[i] = columns.output(name, field);
            } else {
                throw unknownColumn(field, name, columns);
            }
        }
        if (time < 0) {
            throw new InputException("header", "got no time column, expected one named \"time\" (or \"time since\" and its start)");
        }
        List<String> unclaimed = columns.unclaimedInputs();
        if (!unclaimed.isEmpty()) {
            throw new InputException("header", "got no column for the known input \"" + unclaimed.get(0)
                    + "\", expected one for each of the model's inputs " + columns.inputNames());
        }
        String[] names = new String[targets.length];
        boolean[] missingAllowed = new boolean[targets.length];
        for (int i = 0; i < targets.length; i++) {
            names[i] = header.get(i).trim();
            missingAllowed[i] = i != time && columns.isOutput(names[i]);
        }
        return new CsvHeader(targets, new CsvRows(time, names, missingAllowed, maxFields));
    }

    /** The general path for a time cell: a decimal number of seconds or an RFC 3339 time. */
    static void csvTime(String text, String field, TraceTimes times) {
        String s = text.trim();
        boolean timestamp = !s.isEmpty() && !DECIMAL.matcher(s).matches();
        double v = timestamp ? sampleStamp(s, field, "a decimal number of seconds or ") : csvNumber(s, field, false);
        if (!times.add(v, timestamp)) {
            throw times.refusal(field, v, timestamp);
        }
    }

    static String timeField(long line) {
        return "line " + line + ", column time";
    }

    /**
     * The body without the byte order mark (EF BB BF) spreadsheet programs put at the start of a
     * UTF-8 file: it marks the encoding and is not part of the first column's name (common practice,
     * no source).
     */
    static InputStream withoutByteOrderMark(InputStream body) throws IOException {
        PushbackInputStream in = new PushbackInputStream(body, BYTE_ORDER_MARK.length);
        byte[] start = new byte[BYTE_ORDER_MARK.length];
        int read = CsvRecords.readFully(in, start, 0, start.length);
        if (read < start.length || !Arrays.equals(start, BYTE_ORDER_MARK)) {
            in.unread(start, 0, read);
        }
        return in;
    }

    /** A header read as one field that holds a semicolon or a tab: the file is separated by those, not by commas. */
    private static void requireCommaSeparated(List<String> header) {
        if (header.size() != 1) {
            return;
        }
        String only = header.get(0);
        String separator = only.indexOf(';') >= 0 ? "semicolons" : only.indexOf('\t') >= 0 ? "tabs" : null;
        if (separator != null) {
            throw new InputException("header", "got names separated by " + separator + ", expected them separated by commas");
        }
    }

    /** A header column that is neither time nor a channel of the model, named (and cut at 40 characters), or one with no name. */
    private static InputException unknownColumn(String field, String name, TraceColumns columns) {
        if (name.isEmpty()) {
            return new InputException(field, "got a column with no name, expected every column named (a comma at the end"
                    + " of the header line makes one)");
        }
        return new InputException(field, "got an unknown column " + FieldValues.quoted(name) + ", expected \"time\" and the model's"
                + " channels " + columns.channelNames());
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
            throw new InputException(field, "got " + FieldValues.quoted(s) + ", expected a decimal number"
                    + (missingAllowed ? " or an empty cell for a missing sample" : ""));
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

    /** The time array: numbers of seconds, or RFC 3339 times as strings, not mixed. */
    private static void readTimes(JsonParser parser, TraceTimes times) throws IOException {
        expect(parser, parser.currentToken(), JsonToken.START_ARRAY, "time");
        JsonToken token;
        while ((token = parser.nextToken()) != JsonToken.END_ARRAY) {
            boolean timestamp = token == JsonToken.VALUE_STRING;
            double v;
            if (timestamp) {
                v = sampleStamp(parser.getText(), "time[" + times.size() + "]", "a number of seconds or ");
            } else if (token == JsonToken.VALUE_NUMBER_INT || token == JsonToken.VALUE_NUMBER_FLOAT) {
                v = parser.getDoubleValue();
                if (!Double.isFinite(v)) {
                    throw new InputException("time[" + times.size() + "]", "got " + parser.getText() + ", expected a finite number");
                }
            } else {
                throw new InputException("time[" + times.size() + "]", "got " + JsonPaths.describe(token)
                        + ", expected a number of seconds or " + RecordingTime.EXAMPLE);
            }
            if (!times.add(v, timestamp)) {
                throw times.refusal("time[" + times.size() + "]", v, timestamp);
            }
        }
    }

    private static Instant startInstant(JsonParser parser) throws IOException {
        if (parser.currentToken() != JsonToken.VALUE_STRING) {
            throw new InputException("start", "got " + JsonPaths.describe(parser.currentToken()) + ", expected " + RecordingTime.EXAMPLE);
        }
        return stampInstant(parser.getText(), "start", "");
    }

    /** Epoch seconds of a sample's RFC 3339 time; refused naming the field outside the kept years, as written. */
    private static double sampleStamp(String text, String field, String orElse) {
        long micros = stampMicros(text, field, orElse);
        if (!RecordingTime.kept(micros)) {
            throw new InputException(field, "got \"" + text + "\", expected " + RecordingTime.KEPT_YEARS);
        }
        return RecordingTime.seconds(micros);
    }

    /** Epoch microseconds of an RFC 3339 time; refused naming the field, saying what else it could have been. */
    private static long stampMicros(String text, String field, String orElse) {
        Instant t = stampInstant(text, field, orElse);
        return RecordingTime.micros(t);
    }

    /** The instant an RFC 3339 time names; refused naming the field, saying what else it could have been. */
    private static Instant stampInstant(String text, String field, String orElse) {
        try {
            return RecordingTime.parseInstant(text);
        } catch (java.time.format.DateTimeParseException e) {
            String got = "got \"" + (text.length() > 40 ? text.substring(0, 40) + "…" : text) + "\"";
            throw new InputException(field, got + ", expected " + orElse + RecordingTime.EXAMPLE);
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
                column.add(Limits.requireMagnitude(at, v));
            } else {
                throw new InputException(at, "got " + JsonPaths.describe(token) + ", expected a number" + (nullAllowed ? " or null" : ""));
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
                throw new InputException(field, "got " + JsonPaths.describe(token) + ", expected a number > 0");
            }
            columns.noiseSigma(name, Limits.requireSigma(field, parser.getDoubleValue()), field);
        }
    }

    /**
     * A JSON body's options as written: {@link TraceOptions} but for referenceTime, read as a node
     * because it may be RFC 3339 text as well as a number.
     */
    record OptionsAsWritten(String formulation, Boolean estimateOffsets, JsonNode referenceTime,
                            TraceOptions.PriorDocument prior) {

        /** The options, with a numeric reference time (on the trace's clock) and no RFC 3339 one. */
        TraceOptions options() {
            Double seconds = referenceTime != null && referenceTime.isNumber() ? referenceTime.doubleValue() : null;
            return new TraceOptions(formulation, estimateOffsets, seconds, prior);
        }

        /** An RFC 3339 reference time in epoch microseconds, or null for a number or none. */
        Long referenceMicrosOrNull() {
            if (referenceTime == null || referenceTime.isNull() || referenceTime.isNumber()) {
                return null;
            }
            if (!referenceTime.isTextual()) {
                throw new InputException("options.referenceTime", "got " + JsonPaths.describe(referenceTime.asToken()) + ", expected "
                        + SECONDS_OR + RecordingTime.EXAMPLE);
            }
            return stampMicros(referenceTime.textValue(), "options.referenceTime", SECONDS_OR);
        }
    }

    private OptionsAsWritten readOptions(JsonParser parser) throws IOException {
        expect(parser, parser.currentToken(), JsonToken.START_OBJECT, "options");
        try {
            return mapper.readerFor(OptionsAsWritten.class)
                    .with(com.fasterxml.jackson.databind.DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                    .readValue(parser);
        } catch (com.fasterxml.jackson.databind.JsonMappingException e) {
            // Data binding's path starts at the options object; the parser's (a key twice) at the root.
            e.prependPath(new com.fasterxml.jackson.databind.JsonMappingException.Reference(null, "options"));
            throw JsonPaths.refusal(e, "");
        }
    }

    private static void expect(JsonParser parser, JsonToken got, JsonToken wanted, String field) {
        if (got != wanted) {
            throw new InputException(field, "got " + JsonPaths.describe(got) + ", expected " + JsonPaths.describe(wanted));
        }
    }
}
