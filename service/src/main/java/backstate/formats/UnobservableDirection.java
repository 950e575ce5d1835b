package backstate.formats;

import com.fasterxml.jackson.annotation.JsonInclude;
import java.util.ArrayList;
import java.util.List;

/**
 * One direction in the space of the unknowns that a trace leaves undetermined (a unit vector of
 * the unobservable subspace): its components by unknown, each a state of the model or an output's
 * offset. Every value written is a number; a component that could not be computed (not finite) is
 * named in {@code notComputed} instead of being written as null.
 *
 * @param components  the finite components, in the order of the unknowns (states, then offsets)
 * @param notComputed the unknowns whose component is not a finite number; empty, and then left out, normally
 */
@JsonInclude(JsonInclude.Include.NON_EMPTY)
public record UnobservableDirection(List<Component> components, List<Unknown> notComputed) {

    /** An unknown: a state of the model ({@code kind} "state") or the offset of an output ("offset"). */
    public record Unknown(String name, String kind) {
        public static final String STATE = "state";
        public static final String OFFSET = "offset";
        /** The estimate document's prefix for an output's offset ("offset:return_air"); names cannot hold ':'. */
        static final String OFFSET_PREFIX = "offset:";

        /** The unknown an estimate document's {@code unknowns} entry names. */
        static Unknown fromDocumentName(String name) {
            return name.startsWith(OFFSET_PREFIX) ? new Unknown(name.substring(OFFSET_PREFIX.length()), OFFSET)
                    : new Unknown(name, STATE);
        }
    }

    /** One component of the direction: the unknown and its weight in the unit vector. */
    public record Component(String name, String kind, double value) {
    }

    public UnobservableDirection {
        components = List.copyOf(components);
        notComputed = notComputed == null ? List.of() : List.copyOf(notComputed);
    }

    /** The unknown this direction moves most ("hidden", "offset:probe"), for a one-line message. */
    public String largestComponent() {
        Component largest = null;
        for (Component c : components) {
            if (largest == null || Math.abs(c.value()) > Math.abs(largest.value())) {
                largest = c;
            }
        }
        if (largest == null) {
            return "no computable component";
        }
        return largest.kind().equals(Unknown.OFFSET) ? Unknown.OFFSET_PREFIX + largest.name() : largest.name();
    }

    /** The direction {@code vector} over {@code unknowns} (same length, same order). */
    public static UnobservableDirection of(double[] vector, List<Unknown> unknowns) {
        if (vector.length != unknowns.size()) {
            throw new IllegalArgumentException("got a direction of " + vector.length + " components, expected "
                    + unknowns.size() + " (one per unknown)");
        }
        List<Component> components = new ArrayList<>();
        List<Unknown> notComputed = new ArrayList<>();
        for (int i = 0; i < vector.length; i++) {
            Unknown u = unknowns.get(i);
            if (Double.isFinite(vector[i])) {
                components.add(new Component(u.name(), u.kind(), vector[i]));
            } else {
                notComputed.add(u);
            }
        }
        return new UnobservableDirection(components, notComputed);
    }
}
