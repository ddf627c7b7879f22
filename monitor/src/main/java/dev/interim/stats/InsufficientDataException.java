package dev.interim.stats;

/**
 * The data are valid but do not yet support the requested test: too few observations, an empty
 * arm, or no variation at all together with no difference (a statistic of 0/0).
 *
 * <p>It is an {@link IllegalArgumentException} so that callers that only care about bad input need
 * not know it; callers running looks on live data catch it to mean "not testable yet, wait".
 */
public final class InsufficientDataException extends IllegalArgumentException {

    public InsufficientDataException(String message) {
        super(message);
    }
}
