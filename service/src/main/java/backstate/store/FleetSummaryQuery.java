package backstate.store;

import java.time.Instant;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * What a fleet summary covers.
 *
 * @param family            the model family
 * @param channelsByVersion the versions to summarise, in answer order, each with the output channels whose RMS
 *                          to summarise
 * @param times             the recording window and received range of the estimates and traces counted
 * @param staleVersionOrNull stale units are judged by their newest estimate of this version, or of any version
 *                          of the family when null
 * @param staleBefore       a unit whose newest recording started before this is stale
 * @param listLimit         at most this many unit IDs per flag and stale units are listed (counts are complete)
 */
public record FleetSummaryQuery(String family, Map<Integer, List<String>> channelsByVersion, TimeFilter times,
                                Integer staleVersionOrNull, Instant staleBefore, int listLimit) {

    public FleetSummaryQuery {
        Expect.notBlank("family", family);
        Expect.notNull("channelsByVersion", channelsByVersion);
        Expect.notNull("staleBefore", staleBefore);
        Expect.atLeast("listLimit", listLimit, 1);
        Expect.notNull("times", times);
        Map<Integer, List<String>> copy = new LinkedHashMap<>();
        channelsByVersion.forEach((v, channels) -> copy.put(v, List.copyOf(channels)));
        channelsByVersion = java.util.Collections.unmodifiableMap(copy);
    }
}
