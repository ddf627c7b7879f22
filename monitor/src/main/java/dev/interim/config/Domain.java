package dev.interim.config;

import java.util.Set;
import java.util.function.Supplier;

/**
 * Builds a domain value (an experiment, a metric, a horizon) whose constructor validates. Those
 * messages start with the setting they are about ("alpha must lie strictly between 0 and 1, got
 * 2.0"); the error is placed at that key under {@code at}, or at {@code at} itself when the message
 * names no key. The rules stay in one place: the domain classes.
 */
final class Domain {
    private Domain() {}

    static <T> T build(ConfigNode at, Set<String> keys, Supplier<T> constructor) {
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
