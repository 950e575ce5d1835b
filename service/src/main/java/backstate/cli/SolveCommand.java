package backstate.cli;

import backstate.estimation.Formulation;
import backstate.estimation.ModelException;
import backstate.formats.DocumentSolver;
import backstate.formats.EstimateCaution;
import backstate.formats.EstimateDocument;
import backstate.formats.InputException;
import backstate.formats.Json;
import backstate.formats.JsonPaths;
import backstate.formats.Limits;
import backstate.formats.MatrixEntryException;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedColumns;
import backstate.formats.ParsedTrace;
import backstate.formats.RecordingTime;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import backstate.formats.TraceWarning;
import com.fasterxml.jackson.annotation.JsonUnwrapped;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.IOException;
import java.io.InputStream;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Arrays;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.Set;

/**
 * Offline {@code solve}: reads a model file and a trace file (the API's own JSON/CSV formats) and
 * prints the estimate as JSON, with the caution the API sends beside every estimate, through the
 * same solver the service's jobs use. Option flags override the matching fields of a JSON trace's
 * {@code options} one by one; the fields no flag names (a prior among them) are kept.
 * An output with no value in the trace ({@link TraceWarning#ofOutputs}) is warned of on stderr,
 * one line each, after the solve (the service's warnings about the window's dates are left out:
 * a solve dates nothing). Exit codes: 0 solved (or {@code --help}), 3 unobservable, 2 bad input.
 */
public final class SolveCommand {
    static final int SOLVED = 0;
    static final int BAD_INPUT = 2;
    static final int UNOBSERVABLE = 3;
    static final String USAGE = "usage: backstate solve --model FILE --trace FILE [--formulation sampled|continuous|process_noise]"
            + " [--offsets] [--reference-time SECONDS|RFC3339]";
    private static final Set<String> VALUED_FLAGS = Set.of("model", "trace", "formulation", "reference-time");
    /** The reference time's name where the trace reader and the engine refuse it, and the flag that set it. */
    private static final String REFERENCE_OPTION = "referenceTime";
    private static final String REFERENCE_FLAG = "--reference-time";
    private static final String SWITCH_OFFSETS = "offsets";

    private SolveCommand() {
    }

    /**
     * The estimate's fields, then the caution, written in one pass (not through a JSON tree: that
     * would set up Jackson's tree reading too, a few percent of a short command's start-up).
     */
    record PrintedEstimate(@JsonUnwrapped EstimateDocument estimate, String caution) {
    }

    public static int run(String[] args, PrintStream out, PrintStream err) {
        if (Set.of(args).contains("--help") || Set.of(args).contains("-h")) {
            out.println(USAGE);
            return SOLVED;
        }
        try {
            Map<String, String> flags = flags(args);
            ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
            ModelDocument model = readModel(mapper, file(flags, "model"));
            Path traceFile = file(flags, "trace");
            // The flags override a JSON trace's own options field by field; a CSV trace is read with them.
            // A reference time is read on the trace's own clock, as the service reads it.
            ParsedColumns columns = readColumns(traceFile, model, options(flags), flags.get("reference-time"));
            Formulation formulation = TraceOptions.formulation("formulation", columns.options().formulation());
            List<TraceWarning> warnings = TraceWarning.ofOutputs(model, columns, formulation, isJson(traceFile));
            ParsedTrace trace = columns.assemble();
            DocumentSolver.Outcome outcome = DocumentSolver.solve(model, trace, false, Limits.DEFAULTS);
            for (TraceWarning w : warnings) {
                err.println("backstate solve: warning: " + w.field() + ": " + w.detail());
            }
            ObjectMapper pretty = mapper.copy().enable(SerializationFeature.INDENT_OUTPUT);
            if (outcome instanceof DocumentSolver.Outcome.Solved solved) {
                out.println(pretty.writeValueAsString(new PrintedEstimate(solved.document(), EstimateCaution.TEXT)));
                return SOLVED;
            }
            DocumentSolver.Outcome.NotObservable u = (DocumentSolver.Outcome.NotObservable) outcome;
            out.println(pretty.writeValueAsString(Map.of("error", u.message(), "unobservableDirections", u.directions())));
            return UNOBSERVABLE;
        } catch (ModelException e) {
            ModelException worded = e.withTimeWords(RecordingTime::words);
            err.println("backstate solve: " + (flagged(args, e.field()) ? worded.renamed(REFERENCE_FLAG) : worded).getMessage());
            return BAD_INPUT;
        } catch (InputException e) {
            err.println("backstate solve: " + (flagged(args, e.field()) ? new InputException(REFERENCE_FLAG, e.problem()) : e)
                    .getMessage());
            return BAD_INPUT;
        } catch (IllegalArgumentException | IOException e) {
            err.println("backstate solve: " + e.getMessage());
            return BAD_INPUT;
        }
    }

    /** True when a refusal of the reference time is about the flag's value rather than the trace's own. */
    private static boolean flagged(String[] args, String field) {
        return field.equals(REFERENCE_OPTION) && Arrays.asList(args).contains(REFERENCE_FLAG);
    }

    /**
     * The model file; JSON that does not parse, a value of the wrong type or an unknown field is
     * refused in the API's words (JsonPaths.refusal), after the file's name, in one line.
     */
    private static ModelDocument readModel(ObjectMapper mapper, Path path) throws IOException {
        try {
            return mapper.readValue(path.toFile(), ModelDocument.class);
        } catch (MatrixEntryException e) {
            throw e;
        } catch (JsonProcessingException e) {
            InputException refusal = JsonPaths.refusal(e, "model");
            throw new InputException(refusal.field(), path + " is not a model document: " + refusal.problem());
        }
    }

    /** A trace file is JSON by its name's ending, CSV otherwise. */
    private static boolean isJson(Path path) {
        return path.toString().endsWith(".json");
    }

    /** The trace's columns; a CSV trace takes the flags' options (it has none of its own), a JSON one keeps its own. */
    private static ParsedColumns readColumns(Path path, ModelDocument model, TraceOptions flagged, String referenceTime)
            throws IOException {
        TraceReader reader = new TraceReader(Limits.DEFAULTS);
        try (InputStream in = Files.newInputStream(path)) {
            return isJson(path) ? reader.readJsonColumns(in, model, flagged, referenceTime)
                    : reader.readCsvColumns(in, model, flagged, referenceTime);
        }
    }

    /** The options the flags set but the reference time (read with the trace); a field no flag names is null. */
    static TraceOptions options(Map<String, String> flags) {
        if (flags.containsKey("formulation")) {
            TraceOptions.formulation("--formulation", flags.get("formulation"));
        }
        return new TraceOptions(flags.get("formulation"), flags.containsKey(SWITCH_OFFSETS) ? Boolean.TRUE : null,
                null, null);
    }

    private static Map<String, String> flags(String[] args) {
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String name = args[i].startsWith("--") ? args[i].substring(2) : "";
            if (name.equals(SWITCH_OFFSETS)) {
                flags.put(name, "true");
            } else if (VALUED_FLAGS.contains(name) && i + 1 < args.length) {
                flags.put(name, args[++i]);
            } else {
                throw new IllegalArgumentException("got " + args[i] + (VALUED_FLAGS.contains(name) ? " without a value" : "")
                        + ", expected " + USAGE.substring("usage: backstate solve ".length()));
            }
        }
        return flags;
    }

    /** The file a flag names, refused in words when it is missing, a folder or unreadable (before any reading). */
    private static Path file(Map<String, String> flags, String name) {
        Path path = Path.of(require(flags, name));
        String refusal = Files.isDirectory(path) ? "got a folder, expected a file"
                : !Files.exists(path) ? "no such file"
                : !Files.isReadable(path) ? "the file is not readable (file permissions)" : null;
        if (refusal != null) {
            throw new IllegalArgumentException("--" + name + " " + path + ": " + refusal);
        }
        return path;
    }

    private static String require(Map<String, String> flags, String name) {
        String v = flags.get(name);
        if (v == null) {
            throw new IllegalArgumentException("missing --" + name + " FILE");
        }
        return v;
    }
}
