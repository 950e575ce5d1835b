package backstate.config;

import java.io.IOException;
import java.net.URI;
import java.net.URISyntaxException;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;
import java.util.Optional;

/**
 * Where the service keeps its data: a SQLite file (the embedded default) or a PostgreSQL server
 * shared by several replicas, from the {@code database} setting. A PostgreSQL password never
 * comes from the URL (flags show in process lists): it comes from
 * {@code BACKSTATE_DATABASE_PASSWORD} or the file named by {@code BACKSTATE_DATABASE_PASSWORD_FILE}.
 */
public sealed interface DatabaseTarget {

    String PASSWORD_VARIABLE = "BACKSTATE_DATABASE_PASSWORD";
    String PASSWORD_FILE_VARIABLE = "BACKSTATE_DATABASE_PASSWORD_FILE";
    int DEFAULT_POSTGRESQL_PORT = 5432;

    /** For the start-up log: never a password. */
    String describe();

    record SqliteFile(Path file) implements DatabaseTarget {
        @Override
        public String describe() {
            return file.toAbsolutePath().toString();
        }
    }

    /**
     * @param jdbcUrl {@code jdbc:postgresql://host:port/database[?parameters]}
     * @param display the URL as the user gave it (it holds no password)
     */
    record PostgresServer(String jdbcUrl, String user, Optional<Secret> password, String display)
            implements DatabaseTarget {
        @Override
        public String describe() {
            return display + (password.isPresent() ? " (password set)" : "");
        }
    }

    /** Reads the setting; a bad value throws naming the setting and what was expected. */
    static DatabaseTarget parse(String text, Map<String, String> env) {
        String value = text.trim();
        if (value.startsWith("postgresql://") || value.startsWith("postgres://")) {
            return postgres(value, env);
        }
        if (value.startsWith("jdbc:") || value.matches("^[a-zA-Z][a-zA-Z0-9+.-]*://.*")) {
            throw new IllegalArgumentException("setting database: got " + value
                    + ", expected a SQLite file path or postgresql://user@host:port/database");
        }
        if (value.isEmpty()) {
            throw new IllegalArgumentException("setting database: got an empty value, expected a file path or URL");
        }
        return new SqliteFile(Path.of(value));
    }

    private static PostgresServer postgres(String url, Map<String, String> env) {
        URI uri;
        try {
            uri = new URI(url);
        } catch (URISyntaxException e) {
            throw new IllegalArgumentException("setting database: got a URL that does not parse (" + e.getReason()
                    + "), expected postgresql://user@host:port/database");
        }
        String host = uri.getHost();
        String path = uri.getPath() == null ? "" : uri.getPath();
        String userInfo = uri.getUserInfo();
        if (host == null || path.length() < 2 || path.indexOf('/', 1) >= 0) {
            throw new IllegalArgumentException("setting database: got " + redacted(url)
                    + ", expected postgresql://user@host:port/database");
        }
        if (userInfo == null || userInfo.isBlank()) {
            throw new IllegalArgumentException("setting database: got no user in " + url
                    + ", expected postgresql://user@host:port/database");
        }
        if (userInfo.contains(":")) {
            throw new IllegalArgumentException("setting database: got a password in the URL, expected it in "
                    + PASSWORD_VARIABLE + " or " + PASSWORD_FILE_VARIABLE + " (a URL shows in process lists and logs)");
        }
        int port = uri.getPort() == -1 ? DEFAULT_POSTGRESQL_PORT : uri.getPort();
        String query = uri.getRawQuery() == null ? "" : "?" + uri.getRawQuery();
        String jdbcUrl = "jdbc:postgresql://" + host + ":" + port + path + query;
        return new PostgresServer(jdbcUrl, userInfo, password(env), url);
    }

    private static Optional<Secret> password(Map<String, String> env) {
        String direct = env.get(PASSWORD_VARIABLE);
        String file = env.get(PASSWORD_FILE_VARIABLE);
        if (direct != null && file != null) {
            throw new IllegalArgumentException("settings " + PASSWORD_VARIABLE + " and " + PASSWORD_FILE_VARIABLE
                    + ": got both, expected at most one");
        }
        if (direct != null) {
            return Optional.of(new Secret(direct));
        }
        if (file == null) {
            return Optional.empty();
        }
        try {
            String content = Files.readString(Path.of(file), StandardCharsets.UTF_8);
            return Optional.of(new Secret(content.strip()));
        } catch (IOException e) {
            throw new IllegalArgumentException("setting " + PASSWORD_FILE_VARIABLE + ": cannot read " + file
                    + " (" + e.getClass().getSimpleName() + "), expected a readable file holding the password");
        }
    }

    /** The URL with any user information cut, for a message about a URL that failed to parse. */
    private static String redacted(String url) {
        int at = url.indexOf('@');
        int scheme = url.indexOf("://");
        return at > scheme && scheme >= 0 ? url.substring(0, scheme + 3) + "…@" + url.substring(at + 1) : url;
    }
}
