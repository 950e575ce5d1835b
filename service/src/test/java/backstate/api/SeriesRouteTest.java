package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.AfterAll;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.TestInstance;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.ValueSource;

/**
 * The series route rebuilds an estimate's fitted outputs, residuals and state trajectory by solving
 * the stored trace again. Checked against numpy: each test-data/reference/estimates/case-*.json
 * holds the fitted outputs of numpy.linalg.lstsq's solution on the stacked weighted matrix, and the
 * state trajectory Φ(t_k) x̂0 + forced response with standard errors √diag(Φ P Φᵀ) (generate_estimates.py).
 * The cases cover a discrete model, non-uniform times with missing outputs and per-channel σ, and
 * estimated sensor offsets (which the fitted outputs include).
 */
@TestInstance(TestInstance.Lifecycle.PER_CLASS)
class SeriesRouteTest {
    /** The reference cases' own solution tolerance; fitted values are a short product away from it. */
    static final double TOLERANCE = 1e-9;

    TestServer server;

    @BeforeAll
    void start(@TempDir Path dir) {
        server = new TestServer(dir);
    }

    @AfterAll
    void stop() {
        server.close();
    }

    @ParameterizedTest
    @ValueSource(strings = {"case-discrete-gaps", "case-nonuniform-missing", "case-sensor-offset"})
    void fitted_outputs_match_numpy_at_every_sample_and_residuals_are_measured_minus_fitted(String name) throws Exception {
        JsonNode reference = reference(name);
        JsonNode series = series(solve(name, reference), 20_000);
        JsonNode times = reference.get("trace").get("times");
        JsonNode measured = reference.get("trace").get("outputs");
        JsonNode expected = reference.get("expected").get("fitted");
        assertEquals(times.size(), series.get("points").asInt());
        for (int k = 0; k < times.size(); k++) {
            assertEquals(times.get(k).asDouble(), series.get("time").get(k).asDouble(), 0.0, "time " + k);
            for (int j = 0; j < measured.get(k).size(); j++) {
                String where = "output y" + j + " at sample " + k;
                double want = expected.get(k).get(j).asDouble();
                double fitted = series.get("fitted").get("y" + j).get(k).asDouble();
                assertEquals(want, fitted, TOLERANCE * Math.max(1, Math.abs(want)), where);
                JsonNode y = measured.get(k).get(j);
                JsonNode residual = series.get("residual").get("y" + j).get(k);
                if (y.isNull()) {
                    assertTrue(residual.isNull(), "no residual where the sample is missing: " + where);
                } else {
                    // Closed form: the residual is y − fitted, to rounding of the difference.
                    assertEquals(y.asDouble() - fitted, residual.asDouble(), 1e-12 * Math.max(1, Math.abs(y.asDouble())), where);
                }
                JsonNode measuredHere = series.get("measured").get("y" + j).get(k);
                assertEquals(y.isNull() ? null : y.asDouble(), measuredHere.isNull() ? null : measuredHere.asDouble(),
                        "measured " + where);
            }
        }
    }

    @ParameterizedTest
    @ValueSource(strings = {"case-discrete-gaps", "case-nonuniform-missing", "case-sensor-offset"})
    void state_trajectory_and_its_95_percent_band_match_numpy_at_every_sample(String name) throws Exception {
        JsonNode reference = reference(name);
        JsonNode series = series(solve(name, reference), 20_000);
        JsonNode states = reference.get("expected").get("stateTrajectory").get("states");
        JsonNode errors = reference.get("expected").get("stateTrajectory").get("standardErrors");
        // The band is x̂ ± q·SE with x̂0's own multiple q: numpy's half-width over standard error.
        JsonNode interval = reference.get("expected").get("interval");
        double multiple = interval.get("halfWidth").get(0).asDouble()
                / reference.get("expected").get("standardErrors").get(0).asDouble();
        for (int k = 0; k < states.size(); k++) {
            for (int i = 0; i < states.get(k).size(); i++) {
                JsonNode band = series.get("state").get("x" + i);
                String where = "x" + i + " at sample " + k;
                double want = states.get(k).get(i).asDouble();
                double se = errors.get(k).get(i).asDouble();
                assertEquals(want, band.get("estimate").get(k).asDouble(), TOLERANCE * Math.max(1, Math.abs(want)), where);
                assertEquals(se, band.get("standardError").get(k).asDouble(), TOLERANCE * Math.max(1e-12, se), "SE " + where);
                double tolerance = TOLERANCE * Math.max(1, Math.abs(want));
                assertEquals(want - multiple * se, band.get("lower").get(k).asDouble(), tolerance, "lower " + where);
                assertEquals(want + multiple * se, band.get("upper").get(k).asDouble(), tolerance, "upper " + where);
            }
        }
    }

    @Test
    void thinning_keeps_every_s_th_sample_and_the_last_and_the_same_values_on_every_read() throws Exception {
        String estimateId = solve("case-discrete-gaps", reference("case-discrete-gaps"));
        JsonNode full = series(estimateId, 20_000);
        assertEquals(full, series(estimateId, 20_000), "a rebuilt series is the same on every read");
        int samples = full.get("points").asInt();
        for (int maxPoints : new int[] {2, 3, 50}) {
            JsonNode thin = series(estimateId, maxPoints);
            int stride = (samples - 1 + maxPoints - 2) / (maxPoints - 1);
            List<Integer> kept = new ArrayList<>();
            for (int k = 0; k < samples; k += stride) {
                kept.add(k);
            }
            if (kept.get(kept.size() - 1) != samples - 1) {
                kept.add(samples - 1);
            }
            assertTrue(kept.size() <= maxPoints, "at most maxPoints = " + maxPoints);
            assertEquals(stride, thin.get("stride").asInt(), "stride at maxPoints = " + maxPoints);
            assertEquals(kept.size(), thin.get("points").asInt(), "points at maxPoints = " + maxPoints);
            for (int i = 0; i < kept.size(); i++) {
                assertEquals(full.get("time").get(kept.get(i)), thin.get("time").get(i));
                assertEquals(full.get("fitted").get("y0").get(kept.get(i)), thin.get("fitted").get("y0").get(i));
            }
        }
    }

    @Test
    void fewer_than_two_points_are_refused_naming_max_points_in_the_same_words() throws Exception {
        String estimateId = solve("case-discrete-gaps", reference("case-discrete-gaps"));
        for (String got : new String[] {"1", "0", "-3", "x"}) {
            TestServer.Reply reply = server.get("/v1/estimates/" + estimateId + "/series?maxPoints=" + got);
            assertEquals(400, reply.status(), reply.body());
            JsonNode error = reply.json().get("errors").get(0);
            assertEquals("maxPoints", error.get("field").asText());
            assertEquals("got \"" + got + "\", expected a whole number from 2 to 20000: a series holds the window's"
                    + " first and last sample", error.get("detail").asText());
        }
    }

    private JsonNode reference(String name) throws Exception {
        return server.mapper.readTree(TestServer.TEST_DATA.resolve("reference/estimates/" + name + ".json").toFile());
    }

    /** Publishes the case's model as family {@code name}, posts its trace, and answers the estimate's ID. */
    private String solve(String name, JsonNode reference) throws Exception {
        if (server.get("/v1/models/" + name).status() == 404) {
            server.postJson("/v1/models", Map.of("name", name, "description", "numpy reference case"));
            TestServer.Reply published = server.postJson("/v1/models/" + name + "/versions", modelDocument(reference.get("model")));
            assertEquals(201, published.status(), published.body());
        }
        TestServer.Reply accepted = server.postJson("/v1/units/U-" + name + "/traces?model=" + name + "&version=1",
                traceBody(reference.get("trace"), reference.get("options")));
        assertEquals(202, accepted.status(), accepted.body());
        JsonNode job = server.awaitJob(accepted.json().get("jobId").asText());
        assertEquals("succeeded", job.get("state").asText(), job.toString());
        return job.get("estimateId").asText();
    }

    private JsonNode series(String estimateId, int maxPoints) {
        TestServer.Reply reply = server.get("/v1/estimates/" + estimateId + "/series?maxPoints=" + maxPoints);
        assertEquals(200, reply.status(), reply.body());
        return reply.json();
    }

    /** The case's model as a model version document: states x0…, outputs y0…, inputs u0…. */
    private ObjectNode modelDocument(JsonNode m) {
        ObjectNode doc = server.mapper.createObjectNode();
        doc.put("description", "reference case");
        doc.put("timeDomain", m.get("kind").asText());
        if (!m.get("samplePeriod").isNull()) {
            doc.put("samplePeriod", m.get("samplePeriod").asDouble());
        }
        named(doc.putArray("states"), "x", m.get("a").size());
        ArrayNode outputs = named(doc.putArray("outputs"), "y", m.get("c").size());
        JsonNode sigma = m.get("noiseSigma");
        for (int j = 0; j < outputs.size() && !sigma.isNull(); j++) {
            ((ObjectNode) outputs.get(j)).set("noiseSigma", sigma.get(j));
        }
        for (String matrix : new String[] {"a", "b", "c", "d"}) {
            if (!m.get(matrix).isNull()) {
                doc.set(matrix, m.get(matrix));
            }
        }
        if (!m.get("b").isNull()) {
            named(doc.putArray("inputs"), "u", m.get("b").get(0).size());
        }
        return doc;
    }

    private static ArrayNode named(ArrayNode quantities, String prefix, int count) {
        for (int i = 0; i < count; i++) {
            quantities.addObject().put("name", prefix + i).put("unit", "1");
        }
        return quantities;
    }

    /** Columnar JSON trace body: time, outputs by name (null = missing), inputs by name, σ and options. */
    private ObjectNode traceBody(JsonNode t, JsonNode options) {
        ObjectNode body = server.mapper.createObjectNode();
        body.set("time", t.get("times"));
        columns(body.putObject("outputs"), "y", t.get("outputs"));
        if (!t.get("inputs").isNull()) {
            columns(body.putObject("inputs"), "u", t.get("inputs"));
        }
        if (!t.get("noiseSigma").isNull()) {
            ObjectNode sigma = body.putObject("noiseSigma");
            for (int j = 0; j < t.get("noiseSigma").size(); j++) {
                if (!t.get("noiseSigma").get(j).isNull()) {
                    sigma.set("y" + j, t.get("noiseSigma").get(j));
                }
            }
        }
        body.putObject("options").put("estimateOffsets", options.get("offsets").asBoolean());
        return body;
    }

    /** Row-major N×c rows as c named columns. */
    private static void columns(ObjectNode into, String prefix, JsonNode rows) {
        for (int j = 0; j < rows.get(0).size(); j++) {
            ArrayNode column = into.putArray(prefix + j);
            for (JsonNode row : rows) {
                column.add(row.get(j));
            }
        }
    }
}
