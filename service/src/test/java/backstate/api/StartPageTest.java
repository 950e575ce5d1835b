package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.formats.EstimateCaution;
import java.net.URI;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Matcher;
import java.util.regex.Pattern;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * {@code GET /}, the address the start line prints, on a server with keys on: the web console's
 * page, with the caution every estimate carries, and links that lead somewhere (its styles and,
 * for a browser without scripts, the API's own addresses), checked against the OpenAPI document;
 * each link answers 200 (the /v1 one with a key, 401 without).
 */
class StartPageTest {
    static final Pattern HREF = Pattern.compile("href=\"([^\"]+)\"");

    @Test
    void the_start_page_shows_the_caution_and_every_link_answers(@TempDir Path dir) throws Exception {
        OpenApiContract contract = OpenApiContract.load();
        try (TestServer server = new TestServer(dir, AuthFixture.env())) {
            OpenApiContract.Client client = contract.client(server.base());
            TestServer.Reply page = client.get("/");
            assertEquals(200, page.status());
            assertTrue(page.contentType().startsWith("text/html"), page.contentType());
            assertTrue(page.body().contains("<span id=\"caution\">" + EstimateCaution.TEXT + "</span>"), page.body());

            List<String> links = new ArrayList<>();
            Matcher m = HREF.matcher(page.body());
            while (m.find()) {
                if (!m.group(1).startsWith("#")) { // the console's own sections, tested in a browser (backstate.console)
                    links.add(URI.create(server.base() + "/").resolve(m.group(1)).getPath());
                }
            }
            assertEquals(List.of("/webjars/uplot/1.6.30/dist/uPlot.min.css", "/console/style.css", "/console/icon.svg",
                    "/openapi.yaml", "/v1/models", "/healthz", "/readyz", "/metrics"), links);
            for (String link : links) {
                if (link.startsWith("/console/") || link.startsWith("/webjars/")) {
                    assertEquals(200, server.get(link).status(), link + " (a static file, outside the API contract)");
                } else if (link.startsWith("/v1/")) {
                    assertEquals(401, client.get(link).status(), link + " without a key");
                    assertEquals(200, client.get(link, "Authorization", "Bearer " + AuthFixture.ADMIN_KEY).status(), link);
                } else {
                    assertEquals(200, client.get(link).status(), link);
                }
            }
        }
    }
}
