package backstate.formats;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.nio.charset.StandardCharsets;
import java.util.List;

/**
 * {@code TraceReader.readCsv} as it was before the fast path, kept as the oracle for
 * {@link CsvFastPathTest}: the old record reader, and every cell through the general
 * {@code TraceReader.csvNumber} (a regex, then {@code Double.parseDouble}), every time cell through
 * the general {@code TraceReader.csvTime}. The header check and those general paths are shared.
 */
final class ReferenceCsvReader {
    private ReferenceCsvReader() {
    }

    static ParsedTrace readCsv(InputStream body, ModelDocument model, Limits limits) throws IOException {
        TraceColumns columns = new TraceColumns(model, limits);
        int maxFields = 1 + model.outputs().size() + model.inputsOrEmpty().size();
        ReferenceCsvRecords records = new ReferenceCsvRecords(
                new BufferedReader(new InputStreamReader(body, StandardCharsets.UTF_8)),
                maxFields + TraceReader.EXTRA_HEADER_FIELDS, maxFields);
        List<String> header = records.next();
        if (header == null) {
            throw new InputException("header", "got an empty body, expected a header row: time, then channel names");
        }
        TraceReader.CsvHeader layout = TraceReader.headerTargets(header, columns);
        DoubleColumn[] targets = layout.channels();
        List<String> row;
        while ((row = records.next()) != null) {
            if (row.size() != targets.length) {
                throw new InputException("line " + records.line(), "got " + row.size() + " fields, expected " + targets.length);
            }
            TraceReader.csvTime(row.get(layout.time()), TraceReader.timeField(records.line()), columns.times());
            for (int i = 0; i < targets.length; i++) {
                if (i != layout.time()) {
                    boolean missingAllowed = columns.isOutput(header.get(i).trim());
                    targets[i].add(TraceReader.csvNumber(row.get(i), "line " + records.line() + ", column " + header.get(i).trim(), missingAllowed));
                }
            }
        }
        return new ParsedTrace(columns.assemble(), TraceOptions.NONE);
    }
}
