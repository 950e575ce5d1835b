package backstate.reliability;

import java.io.BufferedInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.Socket;
import java.net.URI;
import java.net.http.HttpHeaders;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.TreeMap;

/**
 * A minimal HTTP/1.1 client for the load driver: one kept-alive loopback socket per client
 * thread, the request written as bytes, the answer read by Content-Length or chunked framing.
 * It costs the driver a fraction of the CPU of {@code java.net.http.HttpClient}, which matters when
 * the driver shares the service's two cores. Not for anything but the driver's posts and reads on loopback.
 */
final class LeanPoster {
    private static final int TIMEOUT_MILLIS = 30_000;
    private final String host;
    private final int port;
    private final ThreadLocal<Connection> connections = new ThreadLocal<>();

    LeanPoster(String base) {
        URI uri = URI.create(base);
        this.host = uri.getHost();
        this.port = uri.getPort();
    }

    /** Status and body of one POST; the connection is dropped after any transport failure. */
    Http.Reply post(String path, String contentType, byte[] body) throws IOException {
        return send("POST " + path, "Content-Type: " + contentType + "\r\n", body);
    }

    /** As {@link #post}, with an Idempotency-Key header (a gateway's retry after a 503). */
    Http.Reply post(String path, String contentType, byte[] body, String idempotencyKey) throws IOException {
        return send("POST " + path, "Content-Type: " + contentType + "\r\nIdempotency-Key: " + idempotencyKey + "\r\n", body);
    }

    /** Status, headers and body of one GET. */
    Http.Reply get(String path) throws IOException {
        return send("GET " + path, "", null);
    }

    private Http.Reply send(String requestLine, String headers, byte[] bodyOrNull) throws IOException {
        Connection c = connections.get();
        if (c == null) {
            c = new Connection(new Socket(host, port));
            connections.set(c);
        }
        try {
            return c.send(host, port, requestLine, headers, bodyOrNull);
        } catch (IOException | RuntimeException e) {
            connections.remove();
            c.socket.close();
            throw e;
        }
    }

    private static final class Connection {
        final Socket socket;
        final OutputStream out;
        final InputStream in;

        Connection(Socket socket) throws IOException {
            this.socket = socket;
            socket.setSoTimeout(TIMEOUT_MILLIS);
            socket.setTcpNoDelay(true);
            this.out = socket.getOutputStream();
            this.in = new BufferedInputStream(socket.getInputStream(), 8192);
        }

        Http.Reply send(String host, int port, String requestLine, String headers, byte[] bodyOrNull) throws IOException {
            String head = requestLine + " HTTP/1.1\r\nHost: " + host + ":" + port + "\r\n" + headers
                    + (bodyOrNull == null ? "" : "Content-Length: " + bodyOrNull.length + "\r\n") + "\r\n";
            out.write(head.getBytes(StandardCharsets.ISO_8859_1));
            if (bodyOrNull != null) {
                out.write(bodyOrNull);
            }
            out.flush();
            String status = line();
            int code = Integer.parseInt(status.substring(9, 12));
            Map<String, List<String>> fields = new TreeMap<>(String.CASE_INSENSITIVE_ORDER);
            for (String h = line(); !h.isEmpty(); h = line()) {
                int colon = h.indexOf(':');
                fields.computeIfAbsent(h.substring(0, colon).trim(), k -> new ArrayList<>()).add(h.substring(colon + 1).trim());
            }
            String length = fields.containsKey("Content-Length") ? fields.get("Content-Length").get(0) : "0";
            boolean chunked = fields.getOrDefault("Transfer-Encoding", List.of()).stream()
                    .anyMatch(v -> v.toLowerCase(Locale.ROOT).contains("chunked"));
            byte[] payload = chunked ? chunks() : exactly(Integer.parseInt(length));
            return new Http.Reply(code, new String(payload, StandardCharsets.UTF_8), HttpHeaders.of(fields, (k, v) -> true));
        }

        private byte[] chunks() throws IOException {
            ByteArrayOutputStream all = new ByteArrayOutputStream();
            for (int size = Integer.parseInt(line().split(";")[0].trim(), 16); size > 0;
                 size = Integer.parseInt(line().split(";")[0].trim(), 16)) {
                all.writeBytes(exactly(size));
                line();
            }
            for (String trailer = line(); !trailer.isEmpty(); trailer = line()) {
                // trailers are not used
            }
            return all.toByteArray();
        }

        private byte[] exactly(int n) throws IOException {
            byte[] b = in.readNBytes(n);
            if (b.length != n) {
                throw new IOException("answer cut after " + b.length + " of " + n + " bytes");
            }
            return b;
        }

        private String line() throws IOException {
            StringBuilder s = new StringBuilder();
            for (int ch = in.read(); ch != '\n'; ch = in.read()) {
                if (ch < 0) {
                    throw new IOException("connection closed mid-answer");
                }
                if (ch != '\r') {
                    s.append((char) ch);
                }
            }
            return s.toString();
        }
    }
}
