package backstate.formats;

import com.fasterxml.jackson.annotation.JsonInclude;

/**
 * A named model quantity (state, output or input) with its unit and, for outputs, a default noise σ;
 * written without the fields it does not have (a state's document shows no {@code "noiseSigma": null}).
 */
@JsonInclude(JsonInclude.Include.NON_NULL)
public record Quantity(String name, String unit, Double noiseSigma) {
}
