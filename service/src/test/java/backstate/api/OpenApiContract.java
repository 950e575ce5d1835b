package backstate.api;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.node.BooleanNode;
import com.fasterxml.jackson.databind.node.DecimalNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.TextNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLMapper;
import com.networknt.schema.Schema;
import com.networknt.schema.SchemaLocation;
import com.networknt.schema.SchemaRegistry;
import com.networknt.schema.SchemaRegistryConfig;
import com.networknt.schema.dialect.Dialects;
import java.io.ByteArrayInputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.math.BigDecimal;
import java.math.BigInteger;
import java.net.URI;
import java.net.URLDecoder;
import java.net.http.HttpClient;
import java.net.http.HttpHeaders;
import java.net.http.HttpRequest;
import java.net.http.HttpResponse;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Iterator;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.TreeMap;
import java.util.TreeSet;
import java.util.concurrent.ConcurrentHashMap;
import java.util.regex.Pattern;
import java.util.zip.GZIPInputStream;

/**
 * The OpenAPI document used as a validator: it finds the operation a request addresses, checks the
 * request's path, query and header parameters and its body, and checks a response's status,
 * headers and body against what that operation declares.
 *
 * <p>Schemas are checked by networknt's json-schema-validator in the OpenAPI 3.1 dialect (JSON
 * Schema draft 2020-12: type arrays such as {@code [number, "null"]}, {@code const},
 * {@code propertyNames}), with format assertions on so {@code date-time} and {@code uri-reference}
 * are checked too. Each schema is addressed by a JSON pointer into the document itself, so every
 * {@code $ref} resolves exactly as the document states it. The OpenAPI-level walk (operation
 * lookup, parameters, media types, status codes, headers) is the small part done here.
 */
final class OpenApiContract {
    /** Where the document lives in the source tree (the build copies it into the jar). */
    static final Path FILE = TestServer.TEST_DATA.resolveSibling("openapi").resolve("backstate.yaml");
    /** A name for the document inside the schema registry; never fetched. */
    private static final String BASE = "https://backstate.invalid/openapi.yaml";
    private static final Set<String> METHODS = Set.of("get", "put", "post", "delete", "options", "head", "patch", "trace");
    private static final Pattern INTEGER = Pattern.compile("-?\\d{1,30}");

    static {
        // The validator warns once per OpenAPI (non-schema) keyword at the document's root; they are expected.
        System.setProperty("org.slf4j.simpleLogger.log.com.networknt.schema", "error");
    }

    private final String text;
    private final JsonNode root;
    private final SchemaRegistry registry;
    private final Map<String, Schema> schemas = new ConcurrentHashMap<>();
    private final List<Operation> operations = new ArrayList<>();

    /** One operation: method, path template and the JSON pointer of its Operation Object. */
    record Operation(String method, String template, String pointer) {
        String key() {
            return method.toUpperCase(Locale.ROOT) + " " + template;
        }

        List<String> segments() {
            return List.of(template.substring(1).split("/", -1));
        }
    }

    /** A request as sent: method, path with query, headers (Content-Type among them) and body. */
    record Request(String method, String target, Map<String, String> headers, byte[] body) {
        Request {
            Map<String, String> sorted = new TreeMap<>(String.CASE_INSENSITIVE_ORDER);
            sorted.putAll(headers);
            headers = sorted;
        }

        String path() {
            int q = target.indexOf('?');
            return q < 0 ? target : target.substring(0, q);
        }

        Map<String, List<String>> query() {
            Map<String, List<String>> out = new LinkedHashMap<>();
            int q = target.indexOf('?');
            if (q < 0) {
                return out;
            }
            for (String pair : target.substring(q + 1).split("&")) {
                if (pair.isEmpty()) {
                    continue;
                }
                int eq = pair.indexOf('=');
                String name = decodeQuery(eq < 0 ? pair : pair.substring(0, eq));
                out.computeIfAbsent(name, k -> new ArrayList<>()).add(eq < 0 ? "" : decodeQuery(pair.substring(eq + 1)));
            }
            return out;
        }
    }

    private OpenApiContract(String text) {
        this.text = text;
        try {
            this.root = new YAMLMapper().readTree(text);
        } catch (IOException e) {
            throw new UncheckedIOException("the OpenAPI document is not YAML", e);
        }
        this.registry = SchemaRegistry.withDialect(Dialects.getOpenApi31(), builder -> builder
                .schemas(Map.of(BASE, text))
                .schemaRegistryConfig(SchemaRegistryConfig.builder().formatAssertionsEnabled(true).build()));
        root.path("paths").fields().forEachRemaining(path -> path.getValue().fieldNames().forEachRemaining(method -> {
            if (METHODS.contains(method)) {
                operations.add(new Operation(method, path.getKey(), "/paths/" + escape(path.getKey()) + "/" + method));
            }
        }));
    }

    static OpenApiContract load() {
        try {
            return new OpenApiContract(Files.readString(FILE));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    String text() {
        return text;
    }

    JsonNode document() {
        return root;
    }

    List<Operation> operations() {
        return List.copyOf(operations);
    }

    /** The node at a JSON pointer, following a {@code $ref} found there (repeatedly); missing when absent. */
    JsonNode resolve(String pointer) {
        return root.at(resolvedPointer(pointer));
    }

    /** The pointer a {@code $ref} chain starting at {@code pointer} ends at. */
    String resolvedPointer(String pointer) {
        String at = pointer;
        for (int hops = 0; hops < 16; hops++) {
            JsonNode ref = root.at(at).path("$ref");
            if (!ref.isTextual()) {
                return at;
            }
            at = localPointer(ref.asText());
        }
        throw new IllegalStateException("$ref chain too long at " + pointer);
    }

    /** Validates a JSON value against the schema at a pointer; each error reads "where: what". */
    List<String> schemaErrors(String schemaPointer, JsonNode value) {
        Schema schema = schemas.computeIfAbsent(schemaPointer,
                p -> registry.getSchema(SchemaLocation.of(BASE + "#" + p)));
        return schema.validate(value).stream().map(e -> "at " + e).toList();
    }

    // ---- requests

    /** Everything in the request the document does not allow; empty when the request is valid. */
    List<String> requestErrors(Request r) {
        Operation op = find(r.method(), r.path());
        if (op == null) {
            return List.of("no operation in the document for " + r.method() + " " + r.path());
        }
        List<String> errors = new ArrayList<>();
        Map<String, String> pathValues = pathValues(op, r.path());
        Map<String, List<String>> query = r.query();
        Set<String> declaredQuery = new TreeSet<>();
        for (Map.Entry<String, String> p : parameters(op).entrySet()) {
            JsonNode param = resolve(p.getValue());
            String name = param.path("name").asText();
            String in = param.path("in").asText();
            boolean required = param.path("required").asBoolean(false);
            String schema = resolvedPointer(p.getValue()) + "/schema";
            String where = in + " parameter " + name;
            switch (in) {
                case "path" -> check(errors, where, schema, pathValues.get(name));
                case "query" -> {
                    declaredQuery.add(name);
                    List<String> values = query.get(name);
                    if (values == null) {
                        requirePresent(errors, where, required);
                    } else if (values.size() > 1) {
                        errors.add(where + ": given " + values.size() + " times, declared once");
                    } else {
                        check(errors, where, schema, values.get(0));
                    }
                }
                case "header" -> {
                    String value = r.headers().get(name);
                    if (value == null) {
                        requirePresent(errors, where, required);
                    } else {
                        check(errors, where, schema, value);
                    }
                }
                default -> errors.add(where + ": 'in: " + in + "' is not handled by this validator");
            }
        }
        query.keySet().stream().filter(q -> !declaredQuery.contains(q))
                .forEach(q -> errors.add("query parameter " + q + " is not declared"));
        errors.addAll(bodyErrors(op, r));
        return errors.stream().map(e -> op.key() + ": " + e).toList();
    }

    private List<String> bodyErrors(Operation op, Request r) {
        String pointer = op.pointer() + "/requestBody";
        JsonNode requestBody = resolve(pointer);
        byte[] body = r.body() == null ? new byte[0] : r.body();
        if (requestBody.isMissingNode()) {
            return body.length == 0 ? List.of() : List.of("a body was sent but none is declared");
        }
        if (body.length == 0) {
            return requestBody.path("required").asBoolean(false) ? List.of("the body is required") : List.of();
        }
        String contentPointer = resolvedPointer(pointer) + "/content";
        String type = r.headers().get("Content-Type");
        String media = mediaType(type);
        if (media == null || !resolve(contentPointer).has(media)) {
            return List.of("Content-Type " + type + " is not declared; declared: " + names(resolve(contentPointer)));
        }
        byte[] decoded;
        try {
            decoded = "gzip".equalsIgnoreCase(r.headers().get("Content-Encoding")) ? gunzip(body) : body;
        } catch (IOException e) {
            return List.of("the body is not gzip: " + e.getMessage());
        }
        return valueErrors("request body", contentPointer + "/" + escape(media) + "/schema", media,
                new String(decoded, StandardCharsets.UTF_8));
    }

    // ---- responses

    /** Everything in the response the document does not declare for this request's operation. */
    List<String> responseErrors(Request r, int status, HttpHeaders headers, String body) {
        Operation op = find(r.method(), r.path());
        if (op == null) {
            return List.of("no operation in the document for " + r.method() + " " + r.path());
        }
        String responses = op.pointer() + "/responses";
        String code = Integer.toString(status);
        if (!root.at(responses).has(code)) {
            return List.of(op.key() + ": status " + status + " is not declared; declared: " + names(root.at(responses)));
        }
        String response = resolvedPointer(responses + "/" + code);
        List<String> errors = new ArrayList<>();
        root.at(response).path("headers").fieldNames().forEachRemaining(name -> {
            String header = resolvedPointer(response + "/headers/" + escape(name));
            String where = "response header " + name;
            String value = headers.firstValue(name).orElse(null);
            if (value == null) {
                requirePresent(errors, where, root.at(header).path("required").asBoolean(false));
            } else {
                check(errors, where, header + "/schema", value);
            }
        });
        JsonNode content = root.at(response + "/content");
        if (content.isMissingNode()) {
            if (!body.isEmpty()) {
                errors.add("a body was answered but none is declared");
            }
        } else {
            String type = headers.firstValue("Content-Type").orElse(null);
            String media = mediaType(type);
            if (media == null || !content.has(media)) {
                errors.add("Content-Type " + type + " is not declared; declared: " + names(content));
            } else {
                errors.addAll(valueErrors("response body", response + "/content/" + escape(media) + "/schema", media, body));
            }
        }
        return errors.stream().map(e -> op.key() + " → " + status + ": " + e).toList();
    }

    // ---- the walk

    /** The operation whose template matches; literal segments win over parameters, as routers do. */
    Operation find(String method, String path) {
        String[] actual = path.substring(1).split("/", -1);
        Operation best = null;
        int bestLiterals = -1;
        for (Operation op : operations) {
            List<String> segments = op.segments();
            if (!op.method().equalsIgnoreCase(method) || segments.size() != actual.length) {
                continue;
            }
            int literals = 0;
            boolean matches = true;
            for (int i = 0; i < actual.length && matches; i++) {
                String s = segments.get(i);
                if (isParameter(s)) {
                    matches = !actual[i].isEmpty();
                } else {
                    matches = s.equals(actual[i]);
                    literals++;
                }
            }
            if (matches && literals > bestLiterals) {
                best = op;
                bestLiterals = literals;
            }
        }
        return best;
    }

    /** Path-item parameters overridden by operation parameters, keyed by in + name, as pointers. */
    Map<String, String> parameters(Operation op) {
        Map<String, String> out = new LinkedHashMap<>();
        String pathItem = op.pointer().substring(0, op.pointer().lastIndexOf('/'));
        for (String owner : List.of(pathItem, op.pointer())) {
            JsonNode list = root.at(owner + "/parameters");
            for (int i = 0; i < list.size(); i++) {
                String pointer = owner + "/parameters/" + i;
                JsonNode p = resolve(pointer);
                out.put(p.path("in").asText() + ":" + p.path("name").asText().toLowerCase(Locale.ROOT), pointer);
            }
        }
        return out;
    }

    private Map<String, String> pathValues(Operation op, String path) {
        String[] actual = path.substring(1).split("/", -1);
        List<String> segments = op.segments();
        Map<String, String> out = new LinkedHashMap<>();
        for (int i = 0; i < segments.size(); i++) {
            if (isParameter(segments.get(i))) {
                out.put(segments.get(i).substring(1, segments.get(i).length() - 1), decodePath(actual[i]));
            }
        }
        return out;
    }

    private List<String> valueErrors(String where, String schemaPointer, String media, String body) {
        JsonNode value;
        if (isJson(media)) {
            try {
                value = new ObjectMapper().readTree(body);
            } catch (JsonProcessingException e) {
                return List.of(where + " is not JSON: " + e.getOriginalMessage());
            }
            if (value == null || value.isMissingNode()) {
                return List.of(where + " is empty, expected JSON");
            }
        } else {
            value = TextNode.valueOf(body);
        }
        return schemaErrors(schemaPointer, value).stream().map(e -> where + " " + e).toList();
    }

    /** Checks a parameter or header given as text, read as the type its schema declares. */
    private void check(List<String> errors, String where, String schemaPointer, String text) {
        if (text == null) {
            errors.add(where + ": missing");
            return;
        }
        schemaErrors(schemaPointer, typed(schemaPointer, text)).forEach(e -> errors.add(where + " " + e));
    }

    /** Reads text as an integer, number or boolean when the schema's type says so (else leaves it text). */
    private JsonNode typed(String schemaPointer, String text) {
        JsonNode types = resolve(schemaPointer).path("type");
        Set<String> declared = new TreeSet<>();
        if (types.isTextual()) {
            declared.add(types.asText());
        }
        types.forEach(t -> declared.add(t.asText()));
        if (declared.contains("integer") && INTEGER.matcher(text).matches()) {
            return JsonNodeFactory.instance.numberNode(new BigInteger(text));
        }
        if (declared.contains("number")) {
            try {
                return DecimalNode.valueOf(new BigDecimal(text));
            } catch (NumberFormatException notANumber) {
                return TextNode.valueOf(text);
            }
        }
        if (declared.contains("boolean") && (text.equals("true") || text.equals("false"))) {
            return BooleanNode.valueOf(Boolean.parseBoolean(text));
        }
        return TextNode.valueOf(text);
    }

    private static void requirePresent(List<String> errors, String where, boolean required) {
        if (required) {
            errors.add(where + ": required but absent");
        }
    }

    private static boolean isParameter(String segment) {
        return segment.startsWith("{") && segment.endsWith("}");
    }

    private static boolean isJson(String media) {
        return media.equals("application/json") || media.endsWith("+json");
    }

    private static String mediaType(String contentType) {
        if (contentType == null || contentType.isBlank()) {
            return null;
        }
        int semicolon = contentType.indexOf(';');
        return (semicolon < 0 ? contentType : contentType.substring(0, semicolon)).trim().toLowerCase(Locale.ROOT);
    }

    private static List<String> names(JsonNode object) {
        List<String> out = new ArrayList<>();
        object.fieldNames().forEachRemaining(out::add);
        return out;
    }

    static String localPointer(String ref) {
        if (!ref.startsWith("#")) {
            throw new IllegalArgumentException("got $ref " + ref + ", expected a reference inside the document");
        }
        return ref.substring(1);
    }

    /** A JSON pointer token (RFC 6901): '~' as "~0", '/' as "~1". */
    static String escape(String token) {
        return token.replace("~", "~0").replace("/", "~1");
    }

    /** Percent-decoding of a path segment, where '+' is itself. */
    private static String decodePath(String s) {
        return URLDecoder.decode(s.replace("+", "%2B"), StandardCharsets.UTF_8);
    }

    /** Form decoding of a query name or value, where '+' is a space (as the server reads it). */
    private static String decodeQuery(String s) {
        return URLDecoder.decode(s, StandardCharsets.UTF_8);
    }

    private static byte[] gunzip(byte[] body) throws IOException {
        try (GZIPInputStream in = new GZIPInputStream(new ByteArrayInputStream(body))) {
            return in.readAllBytes();
        }
    }

    /** Every {@code $ref} in the document, with the pointer of the object holding it. */
    Map<String, String> references() {
        Map<String, String> out = new LinkedHashMap<>();
        collectReferences(root, "", out);
        return out;
    }

    private static void collectReferences(JsonNode node, String at, Map<String, String> out) {
        if (node.isObject()) {
            Iterator<Map.Entry<String, JsonNode>> fields = node.fields();
            while (fields.hasNext()) {
                Map.Entry<String, JsonNode> f = fields.next();
                if (f.getKey().equals("$ref") && f.getValue().isTextual()) {
                    out.put(at, f.getValue().asText());
                } else {
                    collectReferences(f.getValue(), at + "/" + escape(f.getKey()), out);
                }
            }
        } else if (node.isArray()) {
            for (int i = 0; i < node.size(); i++) {
                collectReferences(node.get(i), at + "/" + i, out);
            }
        }
    }

    // ---- a client that checks every exchange

    Client client(String base) {
        return new Client(base, this);
    }

    /**
     * Sends requests to a server and fails on anything the document does not allow: in the request
     * (unless the test means to send a request outside the document) and always in the response.
     */
    static final class Client {
        private final String base;
        private final OpenApiContract contract;
        private final HttpClient http = HttpClient.newBuilder().connectTimeout(Duration.ofSeconds(5)).build();

        private Client(String base, OpenApiContract contract) {
            this.base = base;
            this.contract = contract;
        }

        TestServer.Reply get(String target, String... headers) {
            return exchange(new Request("GET", target, pairs(headers), null), true);
        }

        TestServer.Reply post(String target, String contentType, byte[] body, String... headers) {
            return exchange(request(target, contentType, body, headers), true);
        }

        TestServer.Reply postJson(String target, String json) {
            return post(target, "application/json", json.getBytes(StandardCharsets.UTF_8));
        }

        /** A GET the document does not allow; the answer must still be one it declares. */
        TestServer.Reply getOutsideDocument(String target, String... headers) {
            return exchange(new Request("GET", target, pairs(headers), null), false);
        }

        /** A POST the document does not allow; the answer must still be one it declares. */
        TestServer.Reply postOutsideDocument(String target, String contentType, byte[] body, String... headers) {
            return exchange(request(target, contentType, body, headers), false);
        }

        private static Request request(String target, String contentType, byte[] body, String... headers) {
            Map<String, String> all = new LinkedHashMap<>();
            if (contentType != null) {
                all.put("Content-Type", contentType);
            }
            all.putAll(pairs(headers));
            return new Request("POST", target, all, body == null ? new byte[0] : body);
        }

        /** Header names and values, alternating. */
        private static Map<String, String> pairs(String... headers) {
            Map<String, String> out = new LinkedHashMap<>();
            for (int i = 0; i + 1 < headers.length; i += 2) {
                out.put(headers[i], headers[i + 1]);
            }
            return out;
        }

        private TestServer.Reply exchange(Request r, boolean requestWithinDocument) {
            List<String> requestErrors = contract.requestErrors(r);
            if (requestWithinDocument && !requestErrors.isEmpty()) {
                throw new AssertionError("request outside the document:\n  " + String.join("\n  ", requestErrors));
            }
            if (!requestWithinDocument && requestErrors.isEmpty()) {
                throw new AssertionError("expected the document to reject " + r.method() + " " + r.target()
                        + ", but it allows it");
            }
            TestServer.Reply reply = send(r);
            List<String> responseErrors = contract.responseErrors(r, reply.status(), reply.headers(), reply.body());
            if (!responseErrors.isEmpty()) {
                throw new AssertionError("response outside the document for " + r.method() + " " + r.target() + ":\n  "
                        + String.join("\n  ", responseErrors) + "\n  body: " + abbreviate(reply.body()));
            }
            return reply;
        }

        private TestServer.Reply send(Request r) {
            HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(base + r.target())).timeout(Duration.ofSeconds(60));
            r.headers().forEach(b::header);
            if (r.method().equals("GET")) {
                b.GET();
            } else {
                b.method(r.method(), HttpRequest.BodyPublishers.ofByteArray(r.body()));
            }
            try {
                HttpResponse<String> response = http.send(b.build(), HttpResponse.BodyHandlers.ofString());
                return new TestServer.Reply(response.statusCode(), response.body(), response.headers());
            } catch (IOException e) {
                throw new UncheckedIOException(e);
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                throw new AssertionError(e);
            }
        }

        private static String abbreviate(String s) {
            return s.length() > 600 ? s.substring(0, 600) + "…" : s;
        }
    }
}
