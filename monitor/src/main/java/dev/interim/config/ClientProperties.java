package dev.interim.config;

import java.util.Collections;
import java.util.LinkedHashMap;
import java.util.Locale;
import java.util.Map;
import java.util.Set;
import java.util.StringJoiner;
import java.util.regex.Pattern;

/**
 * Kafka client properties passed through as written (TLS, SASL, timeouts), after replacing each
 * {@code ${NAME}} with the environment variable NAME. The resolved values, which may hold
 * credentials, leave only through {@link #forClients()}; {@link #toString()} shows the properties as
 * the file wrote them, and hides entirely those whose names suggest a credential.
 */
public final class ClientProperties {
    private static final Pattern HIDDEN = Pattern.compile(".*(password|secret|jaas|token|credential|\\.key$).*");

    private final Map<String, String> written;
    private final Map<String, String> resolved;

    ClientProperties(Map<String, String> written, Map<String, String> resolved) {
        this.written = Collections.unmodifiableMap(new LinkedHashMap<>(written));
        this.resolved = resolved == null ? null : Collections.unmodifiableMap(new LinkedHashMap<>(resolved));
    }

    static ClientProperties none() {
        return new ClientProperties(Map.of(), Map.of());
    }

    /** The property names, in file order. */
    public Set<String> names() {
        return written.keySet();
    }

    public boolean isEmpty() {
        return written.isEmpty();
    }

    /**
     * The properties with environment variables substituted, for the Kafka clients' configuration
     * only: never log this map.
     *
     * @throws IllegalStateException when the configuration was loaded without reading the environment
     */
    public Map<String, String> forClients() {
        if (resolved == null) {
            throw new IllegalStateException("kafka.properties were checked without reading the environment");
        }
        return resolved;
    }

    /** True for names whose value may be a credential; their values are never shown. */
    static boolean mayHoldCredential(String name) {
        return HIDDEN.matcher(name.toLowerCase(Locale.ROOT)).matches();
    }

    @Override
    public String toString() {
        StringJoiner text = new StringJoiner(", ", "{", "}");
        written.forEach((name, value) -> text.add(name + "=" + (mayHoldCredential(name) ? "(hidden)" : value)));
        return text.toString();
    }
}
