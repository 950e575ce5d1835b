package backstate.formats;

import com.fasterxml.jackson.core.JsonParser;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.DeserializationContext;
import com.fasterxml.jackson.databind.deser.std.StdDeserializer;
import java.io.IOException;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.List;

/**
 * Reads a model matrix (an array of rows, each an array of numbers) and refuses any entry that is
 * not a JSON number in plain words naming it, e.g. {@code a[1][2]: got null, expected a number},
 * instead of the parser's own message. Text is not read as a number. A null row is kept as null:
 * the shape check answers it ({@code ModelShapeCheck}).
 */
final class MatrixReader extends StdDeserializer<double[][]> {

    MatrixReader() {
        super(double[][].class);
    }

    @Override
    public double[][] deserialize(JsonParser p, DeserializationContext ctxt) throws IOException {
        String name = p.currentName() == null ? "matrix" : p.currentName();
        require(p, p.currentToken() == JsonToken.START_ARRAY, name, "an array of rows");
        List<double[]> rows = new ArrayList<>();
        JsonToken token;
        while ((token = p.nextToken()) != JsonToken.END_ARRAY) {
            String row = name + "[" + rows.size() + "]";
            if (token == JsonToken.VALUE_NULL) {
                rows.add(null);
                continue;
            }
            require(p, token == JsonToken.START_ARRAY, row, "a row (an array of numbers)");
            rows.add(readRow(p, row));
        }
        return rows.toArray(new double[0][]);
    }

    private static double[] readRow(JsonParser p, String row) throws IOException {
        double[] values = new double[8];
        int count = 0;
        JsonToken token;
        while ((token = p.nextToken()) != JsonToken.END_ARRAY) {
            require(p, token == JsonToken.VALUE_NUMBER_INT || token == JsonToken.VALUE_NUMBER_FLOAT,
                    row + "[" + count + "]", "a number");
            if (count == values.length) {
                values = Arrays.copyOf(values, 2 * count);
            }
            double value = p.getDoubleValue();
            if (Double.isInfinite(value)) {
                throw new MatrixEntryException(p, row + "[" + count + "]", "got the number " + shortened(p.getText())
                        + ", beyond what a double holds, expected a finite number");
            }
            values[count++] = value;
        }
        return Arrays.copyOf(values, count);
    }

    private static void require(JsonParser p, boolean ok, String field, String expected) throws IOException {
        if (!ok) {
            throw new MatrixEntryException(p, field, "got " + describe(p.currentToken(), p) + ", expected " + expected);
        }
    }

    private static String describe(JsonToken token, JsonParser p) throws IOException {
        if (token == null) {
            return "the end of the input";
        }
        return switch (token) {
            case VALUE_NULL -> "null";
            case VALUE_STRING -> "the text \"" + shortened(p.getText()) + "\"";
            case VALUE_TRUE, VALUE_FALSE -> "the boolean " + p.getText();
            case START_OBJECT -> "an object";
            case START_ARRAY -> "an array";
            case VALUE_NUMBER_INT, VALUE_NUMBER_FLOAT -> "the number " + p.getText();
            default -> token.name();
        };
    }

    private static String shortened(String text) {
        return text.length() > 40 ? text.substring(0, 40) + "…" : text;
    }
}
