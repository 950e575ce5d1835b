package backstate.api;

import backstate.formats.FieldValues;
import backstate.formats.RecordingTime;
import backstate.store.TimeFilter;
import io.javalin.http.Context;
import java.time.Instant;
import java.time.format.DateTimeParseException;

/** Reads and checks path and query parameters; a bad one is a 400 naming it. */
final class Params {
    /** A filter's earliest time: the first a trace may hold (formats.RecordingTime), so every stored trace can be selected. */
    static final Instant EARLIEST = Instant.parse("1700-01-01T00:00:00Z");
    static final Instant LATEST = Instant.parse("9999-12-31T23:59:59Z");

    private Params() {
    }

    static String identifier(Context ctx, String name) {
        return identifier(name, ctx.pathParam(name));
    }

    static String identifier(String name, String value) {
        if (!FieldValues.isIdentifier(value)) {
            throw ApiProblem.invalid(name, FieldValues.notIdentifier(value));
        }
        return value;
    }

    /** A query parameter the route cannot do without: absent or empty is a 400 saying it is required. */
    static String requiredQuery(Context ctx, String name) {
        String value = ctx.queryParam(name);
        if (value == null || value.isEmpty()) {
            throw ApiProblem.invalid(name, "the query parameter is required and was not given");
        }
        return value;
    }

    static int positiveInt(String name, String value) {
        if (value == null || !value.matches("\\d{1,9}") || Integer.parseInt(value) < 1) {
            throw ApiProblem.invalid(name, "got " + quoted(value) + ", expected a whole number >= 1");
        }
        return Integer.parseInt(value);
    }

    static int pathVersion(Context ctx) {
        return positiveInt("version", ctx.pathParam("version"));
    }

    static Integer optionalInt(Context ctx, String name) {
        String v = ctx.queryParam(name);
        return v == null ? null : positiveInt(name, v);
    }

    /** A whole number from {@code min} to {@code max}, or the fallback when absent; {@code why} says why min (or ""). */
    static int intInRange(Context ctx, String name, int fallback, int min, int max, String why) {
        String v = ctx.queryParam(name);
        if (v == null) {
            return fallback;
        }
        boolean whole = v.matches("-?\\d{1,9}");
        int n = whole ? Integer.parseInt(v) : 0;
        if (!whole || n < min || n > max) {
            throw ApiProblem.invalid(name, "got " + quoted(v) + ", expected a whole number from " + min + " to " + max + why);
        }
        return n;
    }

    static int intOrDefault(Context ctx, String name, int fallback, int max) {
        Integer v = optionalInt(ctx, name);
        if (v != null && v > max) {
            throw ApiProblem.invalid(name, "got " + v + ", expected at most " + max);
        }
        return v == null ? fallback : v;
    }

    static Instant optionalInstant(Context ctx, String name) {
        String v = ctx.queryParam(name);
        if (v == null) {
            return null;
        }
        try {
            // The traces' own grammar: RFC 3339 with an offset, leap second 60 refused as in a trace.
            Instant t = RecordingTime.parseInstant(v);
            if (t.isBefore(EARLIEST) || t.isAfter(LATEST)) {
                throw ApiProblem.invalid(name, "got " + quoted(v) + ", expected a time between " + EARLIEST + " and " + LATEST);
            }
            return t;
        } catch (DateTimeParseException e) {
            throw ApiProblem.invalid(name, "got " + quoted(v) + ", expected an RFC 3339 time such as 2026-12-01T00:00:00Z");
        }
    }

    /**
     * The query's time filter: {@code from}/{@code to} on recording time (the trace's window start),
     * {@code receivedFrom}/{@code receivedTo} on when the trace was received; each range half-open
     * and not reversed.
     */
    static TimeFilter timeFilter(Context ctx) {
        Instant from = optionalInstant(ctx, "from");
        Instant to = optionalInstant(ctx, "to");
        Instant receivedFrom = optionalInstant(ctx, "receivedFrom");
        Instant receivedTo = optionalInstant(ctx, "receivedTo");
        requireOrdered("from", from, "to", to);
        requireOrdered("receivedFrom", receivedFrom, "receivedTo", receivedTo);
        return new TimeFilter(from, to, receivedFrom, receivedTo);
    }

    /** Checks that an optional range is not reversed, naming its end. */
    static void requireOrdered(String fromName, Instant from, String toName, Instant to) {
        if (from != null && to != null && from.isAfter(to)) {
            throw ApiProblem.invalid(toName, "got " + to + ", expected a time at or after " + fromName + " (" + from + ")");
        }
    }

    static Boolean optionalBoolean(Context ctx, String name) {
        String v = ctx.queryParam(name);
        if (v == null) {
            return null;
        }
        if (v.equals("true") || v.equals("false")) {
            return Boolean.valueOf(v);
        }
        throw ApiProblem.invalid(name, "got " + quoted(v) + ", expected true or false");
    }

    static String quoted(String v) {
        return FieldValues.quoted(v);
    }
}
