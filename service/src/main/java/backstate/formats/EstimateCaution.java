package backstate.formats;

/** What an estimate may and may not be used for: sent with every estimate, by the API and by the offline solve. */
public final class EstimateCaution {
    public static final String TEXT = "Estimates support, and never replace, calibrated measurements, local food-safety "
            + "and other codes, and licensed professional practice.";

    private EstimateCaution() {
    }
}
