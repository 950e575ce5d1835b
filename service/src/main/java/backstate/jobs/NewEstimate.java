package backstate.jobs;

import backstate.formats.EstimateDocument;
import java.util.ArrayList;
import java.util.List;

/**
 * An estimate a job produced, written with the job's completion: the columns a store keeps, the
 * fleet figures it keeps as rows of their own (each state's value and interval, each output
 * channel's residual RMS), and the estimate document as JSON. The figures are taken from the typed
 * {@link EstimateDocument} ({@link #of}), never parsed back out of the JSON.
 */
public record NewEstimate(String traceId, String unitId, String family, int version, double windowStart,
                          double windowEnd, Double chi2PerDof, List<String> flags, List<StateFigure> states,
                          List<ChannelFigure> channels, String summaryJson) {

    /** One estimated state: its value, standard error and 95 % interval; null where not finite. */
    public record StateFigure(String state, Double value, Double standardError, Double lower, Double upper) {
        public StateFigure {
            requireText("state", state);
        }
    }

    /** One output channel's residual RMS; null when the channel had no present sample. */
    public record ChannelFigure(String channel, Double rms) {
        public ChannelFigure {
            requireText("channel", channel);
        }
    }

    public NewEstimate {
        requireText("traceId", traceId);
        requireText("unitId", unitId);
        requireText("family", family);
        if (version < 1) {
            throw new IllegalArgumentException("got version " + version + ", expected >= 1");
        }
        if (!Double.isFinite(windowStart) || !Double.isFinite(windowEnd) || windowEnd < windowStart) {
            throw new IllegalArgumentException("got window [" + windowStart + ", " + windowEnd
                    + "], expected finite bounds with start <= end");
        }
        if (chi2PerDof != null && !(chi2PerDof >= 0 && Double.isFinite(chi2PerDof))) {
            throw new IllegalArgumentException("got chi2PerDof " + chi2PerDof + ", expected null or finite >= 0");
        }
        flags = List.copyOf(flags);
        for (String flag : flags) {
            // Stores keep flags comma-separated.
            if (flag == null || flag.isEmpty() || flag.contains(",")) {
                throw new IllegalArgumentException("got flag '" + flag + "', expected non-empty text without commas");
            }
        }
        states = List.copyOf(states);
        channels = List.copyOf(channels);
        if (summaryJson == null) {
            throw new IllegalArgumentException("got null summaryJson, expected a value");
        }
    }

    /** An estimate whose fleet figures are read from {@code document}, stored as {@code documentJson}. */
    public static NewEstimate of(String traceId, String unitId, String family, int version, double windowStart,
                                 double windowEnd, Double chi2PerDof, List<String> flags, EstimateDocument document,
                                 String documentJson) {
        return new NewEstimate(traceId, unitId, family, version, windowStart, windowEnd, chi2PerDof, flags,
                stateFigures(document), channelFigures(document), documentJson);
    }

    /** The document's states, in its order; entries without a name are skipped. */
    static List<StateFigure> stateFigures(EstimateDocument document) {
        List<StateFigure> figures = new ArrayList<>();
        if (document != null && document.states() != null) {
            for (EstimateDocument.Value v : document.states()) {
                if (v != null && v.name() != null) {
                    figures.add(new StateFigure(v.name(), v.estimate(), v.standardError(), v.lower(), v.upper()));
                }
            }
        }
        return figures;
    }

    /** The document's residual channels, in its order; entries without an output name are skipped. */
    static List<ChannelFigure> channelFigures(EstimateDocument document) {
        List<ChannelFigure> figures = new ArrayList<>();
        if (document != null && document.residuals() != null && document.residuals().channels() != null) {
            for (EstimateDocument.Channel ch : document.residuals().channels()) {
                if (ch != null && ch.output() != null) {
                    figures.add(new ChannelFigure(ch.output(), ch.rms()));
                }
            }
        }
        return figures;
    }

    private static void requireText(String name, String value) {
        if (value == null || value.isBlank()) {
            throw new IllegalArgumentException("got " + name + " '" + value + "', expected non-blank text");
        }
    }
}
