package backstate.api;

import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.URI;
import java.net.http.HttpRequest;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;
import java.util.zip.GZIPOutputStream;

/**
 * One documented curl command read as the HTTP request it sends, so doc examples run without
 * curl installed. It knows the few things the docs use and fails on anything else, so an
 * example cannot silently mean more than the test sends: {@code $B} (the server), shell quoting,
 * {@code -s}, {@code -X}, {@code -H}, {@code -d}, {@code --data-binary @FILE},
 * {@code gzip -c FILE | curl ... --data-binary @-} and {@code sed '1s/^OLD/NEW/' FILE | curl ...
 * --data-binary @-} (the first line's prefix replaced). Files are relative to the repository root.
 */
record CurlLine(String method, String url, Map<String, String> headers, byte[] body) {
    private static final String GZIP_PIPE = "gzip -c ";
    private static final String FIRST_LINE_SED = "sed '1s/^";

    static CurlLine parse(String command, String base, Path root) {
        byte[] piped = null;
        String curl = command;
        if (command.startsWith(GZIP_PIPE)) {
            int bar = command.indexOf(" | ");
            piped = gzip(read(root, command.substring(GZIP_PIPE.length(), bar).strip()));
            curl = command.substring(bar + 3);
        } else if (command.startsWith(FIRST_LINE_SED)) {
            int bar = command.indexOf(" | ");
            piped = firstLineReplaced(root, command.substring(0, bar));
            curl = command.substring(bar + 3);
        }
        List<String> words = words(curl.replace("$B", base));
        if (words.isEmpty() || !words.get(0).equals("curl")) {
            throw new IllegalArgumentException("not a curl command: " + command);
        }
        String method = null;
        String url = null;
        Map<String, String> headers = new LinkedHashMap<>();
        byte[] body = null;
        for (int i = 1; i < words.size(); i++) {
            String word = words.get(i);
            switch (word) {
                case "-s" -> {
                }
                case "-X" -> method = words.get(++i);
                case "-H" -> {
                    String header = words.get(++i);
                    int colon = header.indexOf(':');
                    headers.put(header.substring(0, colon).strip(), header.substring(colon + 1).strip());
                }
                case "-d" -> body = words.get(++i).getBytes(StandardCharsets.UTF_8);
                case "--data-binary" -> {
                    String source = words.get(++i);
                    body = source.equals("@-") ? piped : read(root, source.substring(1));
                }
                default -> {
                    if (word.startsWith("-") || url != null) {
                        throw new IllegalArgumentException("got " + word + " in " + command + ", which this reader does not know");
                    }
                    url = word;
                }
            }
        }
        if (url == null) {
            throw new IllegalArgumentException("no URL in " + command);
        }
        return new CurlLine(method != null ? method : body != null ? "POST" : "GET", url, headers, body);
    }

    /** {@code sed '1s/^OLD/NEW/' FILE}: the file with OLD at the start of its first line replaced by NEW. */
    private static byte[] firstLineReplaced(Path root, String sed) {
        List<String> words = words(sed);
        String[] parts = words.get(1).split("/", -1);
        if (words.size() != 3 || parts.length != 4 || !parts[0].equals("1s") || !parts[1].startsWith("^") || !parts[3].isEmpty()) {
            throw new IllegalArgumentException("got " + sed + ", expected sed '1s/^OLD/NEW/' FILE");
        }
        String text = new String(read(root, words.get(2)), StandardCharsets.UTF_8);
        String old = parts[1].substring(1);
        if (!text.startsWith(old)) {
            throw new IllegalArgumentException("the first line of " + words.get(2) + " does not start with " + old);
        }
        return (parts[2] + text.substring(old.length())).getBytes(StandardCharsets.UTF_8);
    }

    HttpRequest.Builder request() {
        HttpRequest.Builder b = HttpRequest.newBuilder(URI.create(url)).method(method,
                body == null ? HttpRequest.BodyPublishers.noBody() : HttpRequest.BodyPublishers.ofByteArray(body));
        headers.forEach(b::header);
        return b;
    }

    /** Shell words: whitespace separates, single quotes keep everything, double quotes keep all but the quote. */
    static List<String> words(String line) {
        List<String> words = new ArrayList<>();
        StringBuilder word = null;
        char quote = 0;
        for (char c : line.toCharArray()) {
            if (quote != 0) {
                if (c == quote) {
                    quote = 0;
                } else {
                    word.append(c);
                }
            } else if (c == '\'' || c == '"') {
                quote = c;
                word = word == null ? new StringBuilder() : word;
            } else if (Character.isWhitespace(c)) {
                if (word != null) {
                    words.add(word.toString());
                    word = null;
                }
            } else {
                word = word == null ? new StringBuilder() : word;
                word.append(c);
            }
        }
        if (quote != 0) {
            throw new IllegalArgumentException("unclosed quote in " + line);
        }
        if (word != null) {
            words.add(word.toString());
        }
        return words;
    }

    private static byte[] read(Path root, String relative) {
        try {
            return Files.readAllBytes(root.resolve(relative));
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    private static byte[] gzip(byte[] data) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try (GZIPOutputStream zip = new GZIPOutputStream(out)) {
            zip.write(data);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return out.toByteArray();
    }
}
