package backstate.api;

/** Problem type URIs: relative references under /problems/, each described in the OpenAPI document. */
final class ProblemTypes {
    private ProblemTypes() {
    }

    static String uri(String slug) {
        return "/problems/" + slug;
    }
}
