package backstate.formats;

import com.fasterxml.jackson.core.JsonFactory;
import com.fasterxml.jackson.core.JsonFactoryBuilder;
import com.fasterxml.jackson.core.StreamReadConstraints;
import com.fasterxml.jackson.core.StreamReadFeature;
import com.fasterxml.jackson.core.StreamWriteFeature;
import com.fasterxml.jackson.databind.DeserializationFeature;
import com.fasterxml.jackson.databind.ObjectMapper;
import com.fasterxml.jackson.databind.cfg.CoercionAction;
import com.fasterxml.jackson.databind.cfg.CoercionInputShape;
import com.fasterxml.jackson.databind.type.LogicalType;

/**
 * The one Jackson configuration: strict on input (no nulls in number arrays, unknown fields
 * rejected, a key twice in one object rejected, nothing after the document, no string or number
 * taken for a boolean and no string for a number, depth-limited).
 * Doubles are written by Jackson's shortest-digits writer (Giulietti 2020, "The Schubfach way to
 * render doubles"), which gives the same double back on reading as {@code Double.toString} does
 * at a fraction of Java 17's cost (a tenth of an estimate job's CPU went to
 * {@code Double.toString}).
 */
public final class Json {
    private Json() {
    }

    public static ObjectMapper mapper(Limits limits) {
        JsonFactory factory = strictFactory()
                .streamReadConstraints(StreamReadConstraints.builder()
                        .maxNestingDepth(limits.maxJsonDepth())
                        .maxStringLength(1 << 20)
                        .build())
                .enable(StreamWriteFeature.USE_FAST_DOUBLE_WRITER)
                .build();
        return withoutScalarCoercion(new ObjectMapper(factory)
                .enable(DeserializationFeature.FAIL_ON_NULL_FOR_PRIMITIVES)
                .enable(DeserializationFeature.FAIL_ON_UNKNOWN_PROPERTIES)
                .enable(DeserializationFeature.FAIL_ON_TRAILING_TOKENS)
                .disable(DeserializationFeature.ACCEPT_FLOAT_AS_INT));
    }

    /**
     * A boolean or number field takes only a JSON boolean or number: {@code "true"}, {@code 1} for a
     * boolean and {@code "1"} for a number are refused naming the field, as a wrong type is, instead
     * of being converted (Jackson's default). An integer for a floating-point field stays natural.
     */
    public static ObjectMapper withoutScalarCoercion(ObjectMapper mapper) {
        for (LogicalType type : new LogicalType[] {LogicalType.Boolean, LogicalType.Integer, LogicalType.Float}) {
            mapper.coercionConfigFor(type)
                    .setCoercion(CoercionInputShape.String, CoercionAction.Fail)
                    .setCoercion(CoercionInputShape.EmptyString, CoercionAction.Fail);
        }
        mapper.coercionConfigFor(LogicalType.Boolean)
                .setCoercion(CoercionInputShape.Integer, CoercionAction.Fail)
                .setCoercion(CoercionInputShape.Float, CoercionAction.Fail);
        return mapper;
    }

    /**
     * A factory whose parsers refuse a key written twice in one object (Jackson would otherwise
     * keep the last, or for a streamed trace append both); {@link JsonPaths#refusal} names it.
     */
    public static JsonFactoryBuilder strictFactory() {
        return (JsonFactoryBuilder) JsonFactory.builder().enable(StreamReadFeature.STRICT_DUPLICATE_DETECTION);
    }
}
