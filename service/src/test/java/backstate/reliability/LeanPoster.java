package backstate.reliability;

import java.io.BufferedInputStream;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.Socket;
import java.net.URI;
import java.nio.charset.StandardCharsets;
import java.util.Locale;

/**
 * A minimal HTTP/1.1 client for the load driver: one kept-alive loopback socket per client
 * thread, the request written as bytes, the answer read by Content-Length or chunked framing.
 * It costs the driver a fraction of the CPU of {@code java.net.http.HttpClient}, which matters when
 * the driver shares the service's two cores. Not for anything but trace posts to loopback.
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
        Connection c = connections.get();
        if (c == null) {
            c = new Connection(new Socket(host, port));
            connections.set(c);
        }
        try {
            return c.post(host, port, path, contentType, body);
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

        Http.Reply post(String host, int port, String path, String contentType, byte[] body) throws IOException {
            String head = "POST " + path + " HTTP/1.1\r\nHost: " + host + ":" + port + "\r\nContent-Type: " + contentType
                    + "\r\nContent-Length: " + body.length + "\r\n\r\n";
            out.write(head.getBytes(StandardCharsets.ISO_8859_1));
            out.write(body);
            out.flush();
            String status = line();
            int code = Integer.parseInt(status.substring(9, 12));
            int length = -1;
            boolean chunked = false;
            for (String h = line(); !h.isEmpty(); h = line()) {
                String lower = h.toLowerCase(Locale.ROOT);
                if (lower.startsWith("content-length:")) {
                    length = Integer.parseInt(h.substring(15).trim());
                } else if (lower.startsWith("transfer-encoding:") && lower.contains("chunked")) {
                    chunked = true;
                }
            }
            byte[] payload = chunked ? chunks() : exactly(Math.max(0, length));
            return new Http.Reply(code, new String(payload, StandardCharsets.UTF_8), null);
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
