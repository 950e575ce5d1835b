package backstate.reliability;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.InetAddress;
import java.net.Socket;
import java.net.SocketTimeoutException;
import java.nio.charset.StandardCharsets;
import java.time.Duration;
import java.util.LinkedHashMap;
import java.util.Locale;
import java.util.Map;

/**
 * HTTP/1.1 over a plain loopback socket, for requests no polite client will send: lying or
 * repeated Content-Length, raw bytes in headers, bodies cut short. One request per connection
 * ({@code Connection: close}); the write side is shut after the request so a server waiting for
 * promised bytes sees the end of input instead of hanging. Every read has a timeout, so a hung
 * server fails the test instead of stalling it.
 */
final class Raw {
    /** Far longer than any answer here takes; reaching it means the server hung. */
    static final Duration TIMEOUT = Duration.ofSeconds(15);
    private static final ObjectMapper JSON = new ObjectMapper();

    private Raw() {
    }

    /** A parsed answer; {@code status} is -1 when the server closed without answering. */
    record Reply(int status, Map<String, String> headers, byte[] body) {
        String header(String name) {
            return headers.get(name.toLowerCase(Locale.ROOT));
        }

        String text() {
            return new String(body, StandardCharsets.UTF_8);
        }

        boolean isProblem() {
            String type = header("Content-Type");
            return type != null && type.startsWith("application/problem+json");
        }

        JsonNode json() {
            try {
                return JSON.readTree(body);
            } catch (IOException e) {
                throw new AssertionError("not JSON (" + status + "): " + text(), e);
            }
        }

        /** The first offending field a problem names, or null. */
        String field() {
            JsonNode errors = json().path("errors");
            return errors.isArray() && errors.size() > 0 ? errors.get(0).path("field").asText() : null;
        }

        @Override
        public String toString() {
            String text = text();
            return status + " " + headers.get("content-type") + " " + (text.length() > 300 ? text.substring(0, 300) + "…" : text);
        }
    }

    /** A request: line, header lines (raw bytes allowed), body. Host and Connection are added. */
    static byte[] request(String method, String target, Map<String, byte[]> headers, byte[] body) {
        ByteArrayOutputStream out = new ByteArrayOutputStream(body.length + 512);
        out.writeBytes((method + " " + target + " HTTP/1.1\r\nHost: 127.0.0.1\r\nConnection: close\r\n")
                .getBytes(StandardCharsets.ISO_8859_1));
        for (Map.Entry<String, byte[]> h : headers.entrySet()) {
            out.writeBytes((h.getKey() + ": ").getBytes(StandardCharsets.ISO_8859_1));
            out.writeBytes(h.getValue());
            out.writeBytes(new byte[] {'\r', '\n'});
        }
        out.writeBytes(new byte[] {'\r', '\n'});
        out.writeBytes(body);
        return out.toByteArray();
    }

    /** A POST whose Content-Length is the body's true length unless the headers set one. */
    static byte[] post(String target, Map<String, byte[]> headers, byte[] body) {
        Map<String, byte[]> all = new LinkedHashMap<>(headers);
        if (all.keySet().stream().noneMatch(k -> k.equalsIgnoreCase("Content-Length") || k.equalsIgnoreCase("Transfer-Encoding"))) {
            all.put("Content-Length", Integer.toString(body.length).getBytes(StandardCharsets.ISO_8859_1));
        }
        return request("POST", target, all, body);
    }

    static Map<String, byte[]> headers(String... namesAndValues) {
        Map<String, byte[]> h = new LinkedHashMap<>();
        for (int i = 0; i + 1 < namesAndValues.length; i += 2) {
            h.put(namesAndValues[i], namesAndValues[i + 1].getBytes(StandardCharsets.ISO_8859_1));
        }
        return h;
    }

    /** Sends the bytes to 127.0.0.1:port and reads the answer until the server closes. */
    static Reply exchange(int port, byte[] request) {
        try (Socket socket = new Socket(InetAddress.getLoopbackAddress(), port)) {
            socket.setSoTimeout((int) TIMEOUT.toMillis());
            OutputStream out = socket.getOutputStream();
            try {
                out.write(request);
                out.flush();
                socket.shutdownOutput();
            } catch (IOException e) {
                // The server may answer (413, 431) and close before reading everything we send.
            }
            return parse(readAll(socket.getInputStream()));
        } catch (SocketTimeoutException e) {
            throw new AssertionError("no answer within " + TIMEOUT + ": the server hung", e);
        } catch (IOException e) {
            throw new AssertionError("loopback exchange failed: " + e, e);
        }
    }

    private static byte[] readAll(InputStream in) throws IOException {
        ByteArrayOutputStream all = new ByteArrayOutputStream();
        byte[] buf = new byte[8192];
        long deadline = System.nanoTime() + TIMEOUT.toNanos();
        try {
            int n;
            while ((n = in.read(buf)) != -1) {
                all.write(buf, 0, n);
                if (System.nanoTime() > deadline) {
                    throw new SocketTimeoutException("answer still streaming after " + TIMEOUT);
                }
            }
        } catch (java.net.SocketException e) {
            // A reset after the answer was written (the server closed with our bytes unread) keeps what arrived.
            if (all.size() == 0) {
                throw e;
            }
        }
        return all.toByteArray();
    }

    static Reply parse(byte[] raw) {
        int end = indexOf(raw, new byte[] {'\r', '\n', '\r', '\n'});
        if (end < 0) {
            return new Reply(-1, Map.of(), raw);
        }
        String[] lines = new String(raw, 0, end, StandardCharsets.ISO_8859_1).split("\r\n");
        String[] statusLine = lines[0].split(" ", 3);
        Map<String, String> headers = new LinkedHashMap<>();
        for (int i = 1; i < lines.length; i++) {
            int colon = lines[i].indexOf(':');
            if (colon > 0) {
                headers.put(lines[i].substring(0, colon).trim().toLowerCase(Locale.ROOT), lines[i].substring(colon + 1).trim());
            }
        }
        byte[] body = java.util.Arrays.copyOfRange(raw, end + 4, raw.length);
        if ("chunked".equalsIgnoreCase(headers.get("transfer-encoding"))) {
            body = dechunk(body);
        }
        return new Reply(Integer.parseInt(statusLine[1]), headers, body);
    }

    private static byte[] dechunk(byte[] chunked) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        int at = 0;
        while (at < chunked.length) {
            int lineEnd = indexOf(java.util.Arrays.copyOfRange(chunked, at, chunked.length), new byte[] {'\r', '\n'});
            if (lineEnd < 0) {
                break;
            }
            String sizeText = new String(chunked, at, lineEnd, StandardCharsets.ISO_8859_1).split(";")[0].trim();
            int size = Integer.parseInt(sizeText, 16);
            at += lineEnd + 2;
            if (size == 0) {
                break;
            }
            out.write(chunked, at, Math.min(size, chunked.length - at));
            at += size + 2;
        }
        return out.toByteArray();
    }

    private static int indexOf(byte[] haystack, byte[] needle) {
        outer:
        for (int i = 0; i + needle.length <= haystack.length; i++) {
            for (int j = 0; j < needle.length; j++) {
                if (haystack[i + j] != needle[j]) {
                    continue outer;
                }
            }
            return i;
        }
        return -1;
    }
}
