package backstate.store;

/**
 * Which units of a family a fleet list shows: with a version, each unit's newest estimate made
 * with that version; without, each unit's newest estimate of the family. A flag keeps the units
 * whose newest estimate carries exactly that flag.
 */
public record UnitFilter(String family, Integer versionOrNull, String flagOrNull) {

    public UnitFilter {
        Expect.notBlank("family", family);
        if (versionOrNull != null) {
            Expect.atLeast("version", versionOrNull, 1);
        }
        if (flagOrNull != null) {
            Expect.flag(flagOrNull);
        }
    }
}
