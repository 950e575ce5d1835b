package backstate.formats;

import backstate.text.Counted;
import java.io.IOException;

/**
 * The data rows of a trace's CSV form, as its header laid them out: which column holds the times,
 * each other column's channel name, and whether its cells may be blank (outputs only). Reads rows
 * into a time column and one value column per channel, refusing a row where it stands.
 */
final class CsvRows {
    private final int time;
    private final String[] names;
    private final boolean[] missingAllowed;
    private final int fieldLimit;

    /**
     * @param time           the time column's index
     * @param names          every column's name, as the header gives it
     * @param missingAllowed per column, whether a blank cell reads as missing (NaN)
     * @param fieldLimit     fields past which the records' reader refuses a row by its count
     *                       ({@link CsvRecords}' {@code maxFields}); fewer or more than the header's up
     *                       to it are refused here
     */
    CsvRows(int time, String[] names, boolean[] missingAllowed, int fieldLimit) {
        this.time = time;
        this.names = names;
        this.missingAllowed = missingAllowed;
        this.fieldLimit = fieldLimit;
    }

    /** Fields past which a record is refused by its reader ({@link CsvRecords}' {@code maxFields}). */
    int fieldLimit() {
        return fieldLimit;
    }

    /** Fresh value columns for rows read apart from the trace's own, null at the time column. */
    DoubleColumn[] newColumns(int limit) {
        DoubleColumn[] columns = new DoubleColumn[names.length];
        for (int i = 0; i < columns.length; i++) {
            if (i != time) {
                columns[i] = new DoubleColumn(names[i], limit);
            }
        }
        return columns;
    }

    /** Reads every remaining row of {@code records}: its time into {@code times}, cell i into {@code columns[i]}. */
    void readAll(CsvRecords records, TraceTimes times, DoubleColumn[] columns) throws IOException {
        while (records.next()) {
            if (records.size() != names.length) {
                throw new InputException("line " + records.line(), "got " + Counted.of(records.size(), "field")
                        + ", expected " + names.length);
            }
            readTime(records, times);
            for (int i = 0; i < names.length; i++) {
                if (i != time) {
                    double v = readNumber(records, i);
                    if (Math.abs(v) > Limits.MAX_MAGNITUDE) {
                        Limits.requireMagnitude("line " + records.line() + ", column " + names[i], v);
                    }
                    columns[i].add(v);
                }
            }
        }
    }

    /** The time cell of the current record: a plain decimal read from its bytes, else the general path. */
    private void readTime(CsvRecords records, TraceTimes times) {
        double v = records.decimal(time);
        if (Double.isNaN(v)) {
            TraceReader.csvTime(records.text(time), TraceReader.timeField(records.line()), times);
        } else if (!times.add(v, false)) {
            throw times.refusal(TraceReader.timeField(records.line()), v, false);
        }
    }

    /**
     * Cell i of the current record. An ASCII cell holding a short plain decimal (nearly every
     * cell) is read from its bytes; anything else goes through
     * {@link TraceReader#csvNumber(String, String, boolean)}, which decides and words the answer,
     * so both paths accept, refuse and read alike.
     */
    private double readNumber(CsvRecords records, int i) {
        double v = records.decimal(i);
        if (!Double.isNaN(v) || missingAllowed[i] && records.isBlank(i)) {
            return v;
        }
        return TraceReader.csvNumber(records.text(i), "line " + records.line() + ", column " + names[i], missingAllowed[i]);
    }
}
