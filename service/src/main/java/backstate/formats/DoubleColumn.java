package backstate.formats;

import java.util.Arrays;

/** A growable column of primitive doubles (no boxing), capped at a sample limit. */
final class DoubleColumn {
    private static final int INITIAL_CAPACITY = 1024;

    private final String field;
    private final int limit;
    private double[] values = new double[INITIAL_CAPACITY];
    private int size;

    DoubleColumn(String field, int limit) {
        this.field = field;
        this.limit = limit;
    }

    void add(double v) {
        if (size == limit) {
            throw new InputException(field, "got more than " + limit + " samples, expected at most " + limit);
        }
        if (size == values.length) {
            values = Arrays.copyOf(values, (int) Math.min((long) values.length * 2, limit));
        }
        values[size++] = v;
    }

    int size() {
        return size;
    }

    double get(int i) {
        return values[i];
    }

    String field() {
        return field;
    }
}
