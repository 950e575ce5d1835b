package backstate.api;

import backstate.auth.ApiKeys;
import backstate.auth.Caller;
import backstate.auth.LogText;
import backstate.auth.Role;
import backstate.auth.UnitPattern;
import backstate.store.ApiKeyRow;
import backstate.store.KeyRevocation;
import backstate.text.Counted;
import com.fasterxml.jackson.annotation.JsonInclude;
import com.fasterxml.jackson.databind.ObjectMapper;
import io.javalin.http.Context;
import java.io.InputStream;
import java.time.Instant;
import java.util.regex.Pattern;

/** Key management for admins: issue (the key is shown once), list (never secrets), revoke. */
final class KeyRoutes {
    /** Longest label accepted; labels name a key's holder in lists and logs. */
    static final int MAX_LABEL = 100;
    /** Key management bodies are a few fields. */
    static final long MAX_BODY = 4096;
    /** Key IDs as issued: 16 lowercase hex digits. */
    static final Pattern KEY_ID = Pattern.compile("[0-9a-f]{16}");

    private final ApiKeys keys;
    private final ObjectMapper mapper;

    KeyRoutes(ApiKeys keys, ObjectMapper mapper) {
        this.keys = keys;
        this.mapper = mapper;
    }

    record NewKey(String role, String unitPattern, String label) {
    }

    /** A key as listed: everything but its secret (which the service does not have). */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record KeyView(String id, String role, String unitPattern, String label, String createdAt, String createdBy,
                   String revokedAt) {
        static KeyView of(ApiKeyRow row) {
            return new KeyView(row.id(), row.role(), row.unitPattern(), row.label(), row.createdAt().toString(),
                    row.createdBy(), text(row.revokedAt()));
        }
    }

    /** The answer to an issue request: the only time the key's text is ever sent. */
    @JsonInclude(JsonInclude.Include.NON_NULL)
    record IssuedKey(String key, String id, String role, String unitPattern, String label, String createdAt,
                     String createdBy) {
    }

    void create(Context ctx) throws Exception {
        NewKey body = read(ctx);
        Role role = Role.parse(body.role()).orElseThrow(() ->
                ApiProblem.invalid("role", "got " + Params.quoted(body.role()) + ", expected " + Role.choices()));
        UnitPattern scope = scope(role, body.unitPattern());
        // Printable text on one line: no control, format (bidirectional overrides), line or paragraph
        // separator, or lone surrogate, so a label can neither forge a log line nor reorder what a list shows.
        if (body.label() == null || body.label().isBlank() || body.label().length() > MAX_LABEL
                || LogText.hasHidingOrBreaking(body.label())) {
            throw ApiProblem.invalid("label", "got " + refusedLabel(body.label()) + ", expected 1-" + MAX_LABEL
                    + " printable characters naming who holds the key");
        }
        String by = AccessGuard.caller(ctx).map(Caller::keyId).orElse(null);
        ApiKeys.Issued issued = keys.issue(role, scope, body.label(), by);
        ApiKeyRow row = issued.row();
        ctx.status(201).header("Cache-Control", "no-store")
                .json(new IssuedKey(issued.key(), row.id(), row.role(), row.unitPattern(), row.label(),
                        row.createdAt().toString(), row.createdBy()));
    }

    /** What a refused label was, described rather than echoed: it may hold a line break meant for a log. */
    private static String refusedLabel(String label) {
        if (label == null) {
            return "nothing";
        }
        if (label.length() > MAX_LABEL) {
            return label.length() + " characters";
        }
        return label.isBlank() ? "a blank label" : "a label with a control, format or line-separator character";
    }

    void list(Context ctx) {
        ctx.json(new Views.Page<>(keys.list().stream().map(KeyView::of).toList(), null));
    }

    void revoke(Context ctx) {
        String id = ctx.pathParam("keyId");
        if (!KEY_ID.matcher(id).matches()) {
            // Never echoed: a whole key pasted here would put its secret in the answer (and in logs of 4xx bodies).
            String got = id.startsWith("bsk_") ? "a whole key" : id.length() == 16
                    ? "16 characters, not all lowercase hex digits" : Counted.of(id.length(), "character");
            throw ApiProblem.invalid("keyId", "got " + got + ", expected 16 lowercase hex digits (the part after bsk_)");
        }
        String by = AccessGuard.caller(ctx).map(Caller::keyId).orElse(null);
        KeyRevocation outcome = keys.revoke(id, by);
        switch (outcome) {
            case NOT_FOUND -> throw ApiProblem.notFound("API key " + id);
            case LAST_ADMIN -> throw ApiProblem.conflict("key " + id
                    + " is the last valid admin key; issue another admin key before revoking it");
            case REVOKED, ALREADY_REVOKED -> ctx.json(KeyView.of(keys.find(id).orElseThrow()));
        }
    }

    private static UnitPattern scope(Role role, String glob) {
        if (role != Role.GATEWAY) {
            if (glob != null) {
                throw ApiProblem.invalid("unitPattern", "got " + Params.quoted(glob)
                        + ", expected none: only gateway keys have a unit pattern (this key's role is "
                        + role.wireName() + ")");
            }
            return null;
        }
        UnitPattern pattern = UnitPattern.parse(glob).orElseThrow(() -> ApiProblem.invalid("unitPattern",
                "got " + Params.quoted(glob) + ", expected 1-64 of letters, digits, _ . - and the wildcards * and ?"));
        if (pattern.stars() > UnitPattern.MAX_STARS) {
            throw ApiProblem.invalid("unitPattern", "got " + pattern.stars() + " wildcards *, expected at most "
                    + UnitPattern.MAX_STARS);
        }
        return pattern;
    }

    private NewKey read(Context ctx) throws Exception {
        ModelRoutes.requireJson(ctx);
        try (InputStream body = BodyLimit.open(ctx, MAX_BODY)) {
            NewKey value = mapper.readValue(body, NewKey.class);
            if (value == null) {
                throw ApiProblem.invalid("body", "got nothing, expected a JSON object");
            }
            return value;
        }
    }

    private static String text(Instant instant) {
        return instant == null ? null : instant.toString();
    }
}
