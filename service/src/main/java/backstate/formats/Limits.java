package backstate.formats;

/**
 * Hard limits on what one request or file may hold; checked while streaming so an oversize body
 * is rejected before it is held in memory.
 *
 * @param maxSamples     samples per trace
 * @param maxNameLength  characters in a channel, state, family or unit name
 * @param maxJsonDepth   nesting depth of a JSON body
 */
public record Limits(int maxSamples, int maxNameLength, int maxJsonDepth) {
    public static final Limits DEFAULTS = new Limits(2_000_000, 64, 16);
}
