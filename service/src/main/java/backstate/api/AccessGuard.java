package backstate.api;

import backstate.auth.ApiKeys;
import backstate.auth.Caller;
import backstate.auth.Role;
import backstate.store.ApiKeyStore;
import io.javalin.http.Context;
import io.javalin.http.Handler;
import java.util.Optional;
import org.slf4j.Logger;
import org.slf4j.LoggerFactory;

/**
 * The one place access is enforced. {@link ApiServer} registers every route's handler through
 * {@link #wrap}, which checks the route's {@link Access} rule before the handler runs, so a
 * route added to the table is guarded by the rule written beside it and by nothing else: there
 * is no list of paths to keep in step.
 *
 * <p>Refusals are thrown as {@link AccessDenied} and answered by the one error mapper. They are
 * logged by key ID and route; the Authorization header itself is never logged.
 */
final class AccessGuard {
    private static final Logger LOG = LoggerFactory.getLogger(AccessGuard.class);
    /** Where the checked caller is left for handlers (key management records who issued a key). */
    static final String CALLER = "backstate.caller";
    static final String UNIT_PARAM = "unitId";
    static final String JOB_PARAM = "jobId";

    private final ApiKeys keys;
    private final ApiKeyStore store;
    private final boolean enabled;

    /** @param enabled false runs every handler unguarded (--auth off: demo and local use) */
    AccessGuard(ApiKeys keys, ApiKeyStore store, boolean enabled) {
        this.keys = keys;
        this.store = store;
        this.enabled = enabled;
    }

    /**
     * The route's handler behind its access rule.
     *
     * @throws IllegalStateException if a unit- or job-scoped rule sits on a path without the
     *                               parameter it needs (a mistake in the route table, caught at start)
     */
    Handler wrap(Route route) {
        requireParam(route, Access.GATEWAY_FOR_UNIT, UNIT_PARAM);
        requireParam(route, Access.JOB_OF_UNIT, JOB_PARAM);
        requireParam(route, Access.GATEWAY_FOR_JOB, JOB_PARAM);
        if (!enabled || route.access() == Access.PUBLIC) {
            return route.handler();
        }
        return ctx -> {
            admit(route, ctx);
            route.handler().handle(ctx);
        };
    }

    /** The caller a guarded handler runs for; empty with access control off. */
    static Optional<Caller> caller(Context ctx) {
        return Optional.ofNullable(ctx.attribute(CALLER));
    }

    private void admit(Route route, Context ctx) {
        if (java.util.Collections.list(ctx.req().getHeaders("Authorization")).size() > 1) {
            // RFC 9110 §11.6.2 allows one credential; a proxy may read another of two than this service would.
            throw AccessDenied.unauthenticated(true);
        }
        String authorization = ctx.header("Authorization");
        Caller caller = keys.authenticate(authorization)
                .orElseThrow(() -> AccessDenied.unauthenticated(authorization != null));
        if (!allows(route.access(), caller, ctx)) {
            LOG.info("denied {} {} to {} key {}", route.method(), ctx.path(), caller.role().wireName(), caller.keyId());
            throw AccessDenied.forbidden();
        }
        ctx.attribute(CALLER, caller);
    }

    /** The rules documented on {@link Access}; a new Access value does not compile until it has one here. */
    private boolean allows(Access access, Caller caller, Context ctx) {
        return switch (access) {
            case PUBLIC, ANY_KEY -> true;
            case ADMIN -> caller.is(Role.ADMIN);
            case READER -> caller.is(Role.ADMIN) || caller.is(Role.READER) || caller.is(Role.PIPELINE);
            case PIPELINE -> caller.is(Role.ADMIN) || caller.is(Role.PIPELINE);
            case GATEWAY_FOR_UNIT -> caller.is(Role.ADMIN) || caller.gatewayFor(ctx.pathParam(UNIT_PARAM));
            case JOB_OF_UNIT -> caller.is(Role.ADMIN) || caller.is(Role.READER) || gatewayForJob(caller, ctx);
            case GATEWAY_FOR_JOB -> caller.is(Role.ADMIN) || gatewayForJob(caller, ctx);
        };
    }

    /**
     * Only gateways need the lookup. A job without a trace (a regression) or an unknown job has
     * no unit, so no gateway may reach it, and "unknown" and "not yours" look alike.
     */
    private boolean gatewayForJob(Caller caller, Context ctx) {
        return caller.is(Role.GATEWAY) && store.unitOfJob(ctx.pathParam(JOB_PARAM)).map(caller::gatewayFor).orElse(false);
    }

    private static void requireParam(Route route, Access access, String param) {
        if (route.access() == access && !route.path().contains("{" + param + "}")) {
            throw new IllegalStateException("route " + route.method() + " " + route.path() + ": got access " + access
                    + " on a path without {" + param + "}, expected the parameter it is checked against");
        }
    }
}
