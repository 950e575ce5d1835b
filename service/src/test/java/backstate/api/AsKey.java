package backstate.api;

import java.net.URI;
import java.net.http.HttpRequest;
import java.nio.charset.StandardCharsets;

/** Requests to a test server carrying one Authorization header value (or none, when it is null). */
record AsKey(TestServer server, String authorization) {

    static AsKey bearer(TestServer server, String key) {
        return new AsKey(server, "Bearer " + key);
    }

    static AsKey none(TestServer server) {
        return new AsKey(server, null);
    }

    TestServer.Reply get(String path) {
        return send("GET", path, null, null);
    }

    TestServer.Reply post(String path, String contentType, byte[] body) {
        return send("POST", path, contentType, body);
    }

    TestServer.Reply postJson(String path, String json) {
        return post(path, "application/json", json.getBytes(StandardCharsets.UTF_8));
    }

    /** Any method; a null body sends none. */
    TestServer.Reply send(String method, String path, String contentType, byte[] body) {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(server.base() + path)).method(method,
                body == null ? HttpRequest.BodyPublishers.noBody() : HttpRequest.BodyPublishers.ofByteArray(body));
        if (contentType != null) {
            b.header("Content-Type", contentType);
        }
        if (authorization != null) {
            b.header("Authorization", authorization);
        }
        return server.send(b);
    }
}
