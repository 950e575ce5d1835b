package backstate.regression;

import java.util.List;

/**
 * Which stored traces of the family a run uses, as the request gives it: the listed units (all
 * when null), only traces recorded in [from, to) (window start) and received in [receivedFrom,
 * receivedTo) (RFC 3339, either end of each open when null), and only the latest
 * {@code latestPerUnit} recordings per unit (all when null).
 */
public record Selection(List<String> units, Integer latestPerUnit, String from, String to, String receivedFrom,
                        String receivedTo) {

    public static final Selection ALL = new Selection(null, null, null, null, null, null);
}
