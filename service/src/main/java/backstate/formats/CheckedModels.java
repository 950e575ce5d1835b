package backstate.formats;

import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.databind.ObjectMapper;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;

/**
 * Published model versions, each parsed and checked once: versions are immutable, so a version's
 * {@link CheckedModel} serves every post and job. One instance is shared by trace intake and the
 * jobs; it is dropped whole past {@link #MAX_CACHED}, which no real fleet nears.
 */
public final class CheckedModels {
    /** Model versions whose checked models are kept. */
    static final int MAX_CACHED = 1024;

    private final ObjectMapper mapper;
    private final Limits limits;
    private final Map<String, CheckedModel> models = new ConcurrentHashMap<>();

    public CheckedModels(ObjectMapper mapper, Limits limits) {
        this.mapper = mapper;
        this.limits = limits;
    }

    /** The checked model of a stored version; a stored document that does not read is a broken database. */
    public CheckedModel of(String family, int version, String documentJson) {
        String key = family + "/" + version;
        CheckedModel cached = models.get(key);
        if (cached != null) {
            return cached;
        }
        if (models.size() >= MAX_CACHED) {
            models.clear();
        }
        CheckedModel checked = check(key, documentJson);
        models.put(key, checked);
        return checked;
    }

    private CheckedModel check(String key, String documentJson) {
        try {
            return CheckedModel.of(mapper.readValue(documentJson, ModelDocument.class), limits);
        } catch (JsonProcessingException e) {
            throw new IllegalStateException("stored model " + key + " is not readable", e);
        }
    }
}
