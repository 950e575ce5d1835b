package backstate.formats;

import backstate.estimation.StateSpaceModel;

/**
 * A model version's document with the engine model it validated into. Both are immutable, so one
 * instance per published version serves every post and job, and names and shapes are checked
 * once instead of per trace.
 */
public record CheckedModel(ModelDocument document, StateSpaceModel engine) {

    /** Validates the document and builds its engine model; errors name the field. */
    public static CheckedModel of(ModelDocument document, Limits limits) {
        return new CheckedModel(document, document.toModel(limits));
    }
}
