package backstate.regression;

/**
 * A regression request that reads well but does not fit what is stored: a family or version that
 * does not exist, versions with different outputs, a selection that matches no traces or too many.
 * Names the request field; the HTTP edge answers 422.
 */
public final class RegressionRefused extends RuntimeException {
    private final String field;
    private final String detail;

    RegressionRefused(String field, String detail) {
        super(field + ": " + detail);
        this.field = field;
        this.detail = detail;
    }

    public String field() {
        return field;
    }

    public String detail() {
        return detail;
    }
}
