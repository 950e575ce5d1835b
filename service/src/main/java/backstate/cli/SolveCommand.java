package backstate.cli;

import backstate.formats.DocumentSolver;
import backstate.formats.InputException;
import backstate.formats.Json;
import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.ParsedTrace;
import backstate.formats.TraceOptions;
import backstate.formats.TraceReader;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.SerializationFeature;
import java.io.InputStream;
import java.io.PrintStream;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;

/**
 * Offline {@code solve}: reads a model file and a trace file (the API's own JSON/CSV formats) and
 * prints the estimate as JSON, through the same solver the service's jobs use.
 * Exit codes: 0 solved, 3 unobservable, 2 bad input.
 */
public final class SolveCommand {
    private SolveCommand() {
    }

    public static int run(String[] args, PrintStream out, PrintStream err) {
        try {
            Map<String, String> flags = flags(args);
            ObjectMapper mapper = Json.mapper(Limits.DEFAULTS);
            ModelDocument model = mapper.readValue(Path.of(require(flags, "model")).toFile(), ModelDocument.class);
            ParsedTrace trace = readTrace(Path.of(require(flags, "trace")), model, options(flags));
            DocumentSolver.Outcome outcome = DocumentSolver.solve(model, trace, false, Limits.DEFAULTS);
            ObjectMapper pretty = mapper.copy().enable(SerializationFeature.INDENT_OUTPUT);
            if (outcome instanceof DocumentSolver.Outcome.Solved solved) {
                out.println(pretty.writeValueAsString(solved.document()));
                return 0;
            }
            DocumentSolver.Outcome.NotObservable u = (DocumentSolver.Outcome.NotObservable) outcome;
            out.println(pretty.writeValueAsString(Map.of("error", u.message(), "unobservableDirections", u.directions())));
            return 3;
        } catch (InputException | IllegalArgumentException e) {
            err.println("backstate solve: " + e.getMessage());
            return 2;
        } catch (java.io.IOException e) {
            err.println("backstate solve: " + e.getMessage());
            return 2;
        }
    }

    private static ParsedTrace readTrace(Path path, ModelDocument model, TraceOptions options) throws java.io.IOException {
        TraceReader reader = new TraceReader(Limits.DEFAULTS);
        try (InputStream in = Files.newInputStream(path)) {
            if (path.toString().endsWith(".json")) {
                ParsedTrace parsed = reader.readJson(in, model);
                return options == TraceOptions.NONE ? parsed : new ParsedTrace(parsed.trace(), options);
            }
            return reader.readCsv(in, model, options);
        }
    }

    private static TraceOptions options(Map<String, String> flags) {
        if (!flags.containsKey("formulation") && !flags.containsKey("offsets") && !flags.containsKey("reference-time")) {
            return TraceOptions.NONE;
        }
        Double reference = flags.containsKey("reference-time") ? Double.valueOf(flags.get("reference-time")) : null;
        return new TraceOptions(flags.get("formulation"), flags.containsKey("offsets") ? Boolean.TRUE : null, reference, null);
    }

    private static Map<String, String> flags(String[] args) {
        Map<String, String> flags = new LinkedHashMap<>();
        for (int i = 0; i < args.length; i++) {
            String a = args[i];
            if (a.equals("--offsets")) {
                flags.put("offsets", "true");
            } else if (a.startsWith("--") && i + 1 < args.length) {
                flags.put(a.substring(2), args[++i]);
            } else {
                throw new IllegalArgumentException("got " + a + ", expected --model FILE --trace FILE [--formulation sampled|continuous] [--offsets] [--reference-time SECONDS]");
            }
        }
        return flags;
    }

    private static String require(Map<String, String> flags, String name) {
        String v = flags.get(name);
        if (v == null) {
            throw new IllegalArgumentException("missing --" + name + " FILE");
        }
        return v;
    }
}
