package backstate.regression;

import backstate.formats.Limits;
import backstate.formats.ModelDocument;
import backstate.formats.RecordingTime;
import backstate.solving.CorruptTraceException;
import backstate.solving.StoredTraceSolver;
import backstate.store.ModelCatalogue;
import backstate.store.ModelVersionRow;
import backstate.store.TraceRef;
import java.util.List;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * A run's two model versions, loaded once per job: they solve its traces in pairs
 * ({@link VersionPair}) and head its report. A whole run, a chunk of it, and a run doing one of
 * its own chunks all walk their traces through {@link #walk}, so they compare alike.
 */
final class ComparedVersions {
    private static final Logger LOG = LoggerFactory.getLogger(ComparedVersions.class);

    /** Why a walk over traces stopped before its end. */
    enum Halt {
        /** A cancel was requested for the run (or the run it is a chunk of ended). */
        CANCELLED,
        /** The job was taken from this attempt: its lease ran out, or someone else finished it. */
        LOST
    }

    /** Asked before each trace and after the last, with how many are done: null to go on, or why to stop. */
    @FunctionalInterface
    interface Checkpoint {
        Halt reached(int done) throws Exception;
    }

    /** Loads a family's two versions (App's catalogue and solver, in the handler). */
    @FunctionalInterface
    interface Loader {
        ComparedVersions load(String family, int baseline, int candidate);
    }

    private final String family;
    private final RegressionResult.VersionInfo baseline;
    private final RegressionResult.VersionInfo candidate;
    private final VersionPair pair;
    private final StoredTraceSolver stored;

    private ComparedVersions(String family, RegressionResult.VersionInfo baseline,
                             RegressionResult.VersionInfo candidate, VersionPair pair, StoredTraceSolver stored) {
        this.family = family;
        this.baseline = baseline;
        this.candidate = candidate;
        this.pair = pair;
        this.stored = stored;
    }

    static ComparedVersions load(ModelCatalogue models, StoredTraceSolver stored, Limits limits, String family,
                                 int baseline, int candidate) {
        ModelVersionRow baselineRow = version(models, family, baseline);
        ModelVersionRow candidateRow = version(models, family, candidate);
        ModelDocument baselineDoc = stored.model(baselineRow).document();
        ModelDocument candidateDoc = stored.model(candidateRow).document();
        return new ComparedVersions(family, info(baselineRow, baselineDoc), info(candidateRow, candidateDoc),
                new VersionPair(baselineDoc, candidateDoc, limits), stored);
    }

    /** An empty report of this pair over {@code tracesTotal} traces. */
    RegressionReport report(Tolerances tolerances, int tracesTotal) {
        return new RegressionReport(family, baseline, candidate, tolerances, tracesTotal);
    }

    /**
     * Compares the traces in order into the report, asking the checkpoint before each trace and
     * after the last; returns null when it reached the end, or why it stopped.
     */
    Halt walk(List<String> traceIds, RegressionReport report, Checkpoint checkpoint) throws Exception {
        for (int done = 0; ; done++) {
            Halt halt = checkpoint.reached(done);
            if (halt != null || done == traceIds.size()) {
                return halt;
            }
            compare(traceIds.get(done), report);
        }
    }

    /** A trace whose stored payload is damaged is compared by neither version, and the walk goes on. */
    private void compare(String traceId, RegressionReport report) {
        StoredTraceSolver.Loaded loaded;
        try {
            loaded = stored.load(traceId);
        } catch (CorruptTraceException e) {
            LOG.error("regression: {}; its unit is reported as not compared", e.getMessage());
            TraceRef trace = e.ref();
            Fit unreadable = Fit.notSolved(Fit.Status.UNREADABLE, e.getMessage());
            report.add(trace.unitId(), trace.id(), RecordingTime.format(e.windowStart()), trace.receivedAt().toString(),
                    trace.version(), unreadable, unreadable);
            return;
        }
        TraceRef trace = loaded.ref();
        pair.compare(report, trace.unitId(), trace.id(), trace.receivedAt().toString(), trace.version(),
                loaded.model().document(), loaded.parsed());
    }

    private static ModelVersionRow version(ModelCatalogue models, String family, int version) {
        return models.findVersion(family, version).orElseThrow(() ->
                new IllegalStateException("model version " + family + "/" + version + " is gone"));
    }

    private static RegressionResult.VersionInfo info(ModelVersionRow row, ModelDocument doc) {
        return new RegressionResult.VersionInfo(row.version(), row.status(),
                doc.states().stream().map(q -> q.name()).toList(), doc.outputs().stream().map(q -> q.name()).toList(),
                VersionPair.declaresProcessNoise(doc) ? VersionPair.PROCESS_NOISE : null);
    }
}
