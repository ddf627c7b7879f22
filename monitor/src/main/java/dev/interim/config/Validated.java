package dev.interim.config;

import java.util.Set;
import java.util.function.Supplier;

/**
 * A value built by its own validating constructor (an experiment, a metric, a horizon), its error placed
 * at the configuration key it names: {@code Validated.at(node, keys, () -> new X(...))}. Those
 * messages start with the setting they are about ("alpha must lie strictly between 0 and 1, got
 * 2.0"); the error is placed at that key under {@code at}, or at {@code at} itself when the message
 * names no key. The rules stay in one place: the domain classes.
 */
final class Validated {
    private Validated() {}

    static <T> T at(ConfigNode at, Set<String> keys, Supplier<T> constructor) {
        try {
            return constructor.get();
        } catch (ConfigException e) {
            throw e;
        } catch (IllegalArgumentException e) {
            String message = e.getMessage() == null ? "is not valid" : e.getMessage();
            String token = message.split("[ :]", 2)[0];
            String key = token.split("\\.", 2)[0];
            if (keys.contains(key)) {
                throw new ConfigException(at.path() + "." + token, message);
            }
            throw at.error(message);
        }
    }
}
