package backstate.store;

import java.time.Instant;

/** A model family as stored. */
public record FamilyRow(String name, String description, Instant createdAt) {
}
