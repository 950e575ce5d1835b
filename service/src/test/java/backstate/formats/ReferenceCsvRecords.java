package backstate.formats;

import java.io.IOException;
import java.io.Reader;
import java.util.ArrayList;
import java.util.List;

/**
 * The CSV record reader as it was before the byte-level {@link CsvRecords} (per-character reads
 * from a decoding reader), kept as the oracle the new one is compared with. One change since:
 * the header may have more fields than later records, as in {@link CsvRecords}, so that both
 * readers name a header's extra column.
 */
final class ReferenceCsvRecords {
    /** Longest field accepted; numbers and names are far shorter, so a longer one is hostile input. */
    static final int MAX_FIELD_LENGTH = 256;

    private final Reader reader;
    private final int maxFields;
    private int fieldLimit;
    private long line = 1;
    private long recordLine = 1;
    private int peeked = -2;

    ReferenceCsvRecords(Reader reader, int headerFields, int maxFields) {
        this.reader = reader;
        this.maxFields = maxFields;
        this.fieldLimit = headerFields;
    }

    /** Line number where the record last returned started. */
    long line() {
        return recordLine;
    }

    /** The next record, or null at the end of input. A blank line ends nothing and is skipped. */
    List<String> next() throws IOException {
        while (true) {
            int c = read();
            if (c == -1) {
                return null;
            }
            if (c == '\r' || c == '\n') {
                consumeLineEnd(c);
                continue;
            }
            unread(c);
            recordLine = line;
            List<String> record = record();
            fieldLimit = maxFields;
            return record;
        }
    }

    private List<String> record() throws IOException {
        List<String> fields = new ArrayList<>();
        StringBuilder field = new StringBuilder();
        boolean quoted = false;
        boolean wasQuoted = false;
        while (true) {
            int c = read();
            if (quoted) {
                if (c == -1) {
                    throw new InputException("line " + line, "got end of input inside a quoted field, expected a closing quote");
                }
                if (c == '"') {
                    int after = read();
                    if (after == '"') {
                        append(field, '"');
                        continue;
                    }
                    unread(after);
                    quoted = false;
                    continue;
                }
                append(field, (char) c);
                continue;
            }
            if (c == '"' && field.length() == 0 && !wasQuoted) {
                quoted = true;
                wasQuoted = true;
                continue;
            }
            if (c == ',' || c == '\r' || c == '\n' || c == -1) {
                addField(fields, field.toString());
                field.setLength(0);
                wasQuoted = false;
                if (c == ',') {
                    continue;
                }
                if (c != -1) {
                    consumeLineEnd(c);
                }
                return fields;
            }
            if (wasQuoted) {
                throw new InputException("line " + line, "got text after a closing quote, expected a comma or line end");
            }
            append(field, (char) c);
        }
    }

    private void addField(List<String> fields, String value) {
        if (fields.size() == fieldLimit) {
            throw new InputException("line " + line, "got more than " + fieldLimit + " fields, expected at most " + fieldLimit);
        }
        fields.add(value);
    }

    private void append(StringBuilder field, char c) {
        if (field.length() == MAX_FIELD_LENGTH) {
            throw new InputException("line " + line, "got a field longer than " + MAX_FIELD_LENGTH + " characters");
        }
        field.append(c);
    }

    private void consumeLineEnd(int c) throws IOException {
        if (c == '\r') {
            int after = read();
            if (after != '\n') {
                unread(after);
            }
        }
        line++;
    }

    private int read() throws IOException {
        if (peeked != -2) {
            int c = peeked;
            peeked = -2;
            return c;
        }
        return reader.read();
    }

    private void unread(int c) {
        peeked = c;
    }
}
