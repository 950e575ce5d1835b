package backstate.auth;

/**
 * Who made a request: the key's ID (never its secret), its role and, for a gateway, its scope.
 *
 * @param scope the units a gateway key may act for; null for admin and reader keys
 */
public record Caller(String keyId, Role role, UnitPattern scope) {

    public boolean is(Role r) {
        return role == r;
    }

    /** True for a gateway key whose pattern matches the unit (false for other roles and for null). */
    public boolean gatewayFor(String unitId) {
        return role == Role.GATEWAY && scope != null && scope.matches(unitId);
    }
}
