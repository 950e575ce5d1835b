package backstate.api;

import backstate.formats.EstimateCaution;
import backstate.store.Database;
import io.javalin.http.Context;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.Map;
import java.util.function.IntSupplier;

/** The start page, liveness, readiness, metrics and the OpenAPI document. */
final class ServiceRoutes {
    /** The OpenAPI document on the class path (copied from openapi/ at build time). */
    static final String SPEC_RESOURCE = "/openapi/backstate.yaml";
    /** The start page at {@code /}: what the service is, the caution, and links to the contract and the service routes. */
    static final String INDEX_RESOURCE = "/index.html";
    /** Where the start page takes the caution every estimate carries. */
    static final String CAUTION_SLOT = "CAUTION";

    private final Database store;
    private final PrometheusMeterRegistry registry;
    private final IntSupplier queued;
    private final int jammedAt;
    private final byte[] spec;
    private final String index;

    ServiceRoutes(Database store, PrometheusMeterRegistry registry, IntSupplier queued, int jammedAt) {
        this.store = store;
        this.registry = registry;
        this.queued = queued;
        this.jammedAt = jammedAt;
        this.spec = loadSpec();
        this.index = new String(resource(INDEX_RESOURCE), StandardCharsets.UTF_8).replace(CAUTION_SLOT, EstimateCaution.TEXT);
    }

    void index(Context ctx) {
        ctx.html(index);
    }

    void health(Context ctx) {
        ctx.json(Map.of("status", "alive"));
    }

    /** Ready when the database answers, no damage was found in it (at start or since), and the queue is below its limit. */
    void ready(Context ctx) {
        if (!store.isReachable()) {
            throw ApiProblem.busy("the database is not reachable");
        }
        String damage = store.damageOrNull();
        if (damage != null) {
            throw ApiProblem.databaseDamaged("the database is damaged (" + damage + "); restore it from a backup");
        }
        int depth = queued.getAsInt();
        if (depth >= jammedAt) {
            throw ApiProblem.busy("the job queue is full (" + depth + " queued)");
        }
        ctx.json(Map.of("status", "ready", "queued", depth));
    }

    void metrics(Context ctx) {
        ctx.contentType("text/plain; version=0.0.4; charset=utf-8").result(registry.scrape());
    }

    void openapi(Context ctx) {
        ctx.contentType("application/yaml").result(spec);
    }

    static byte[] loadSpec() {
        return resource(SPEC_RESOURCE);
    }

    private static byte[] resource(String name) {
        try (InputStream in = ServiceRoutes.class.getResourceAsStream(name)) {
            if (in == null) {
                throw new IllegalStateException(name + " missing from the class path");
            }
            return in.readAllBytes();
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
