package dev.interim.config;

import dev.interim.events.EventMapping;

import com.fasterxml.jackson.core.JsonPointer;
import dev.interim.text.UserText;
import java.net.URI;
import java.net.URISyntaxException;
import java.time.Duration;
import java.util.ArrayList;
import java.util.Base64;
import java.util.LinkedHashMap;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.Optional;
import java.util.Set;
import java.util.regex.Pattern;

/**
 * Reads the sections that connect the daemon to the world: kafka, events, http and webhook. Each key
 * is read on its own, so that a section reports every one of its problems; a section with a problem
 * is not built (see {@link Problems}).
 */
final class ConnectionReaders {
    static final Set<String> KAFKA_KEYS = keys("bootstrap_servers", "properties", "input_topics", "decisions_topic",
            "dead_letter_topic", "state_topic_prefix", "consumer_group_prefix", "commit_interval", "input_keyed_by_unit",
            "tally_threads", "instance_id", "startup_timeout");
    static final Set<String> EVENTS_KEYS = keys("experiment", "arm", "unit", "time");
    static final Set<String> HTTP_KEYS = keys("bind_address", "port", "admin_token_env", "allowed_hosts");
    static final Set<String> WEBHOOK_KEYS = keys("url", "signing_key_env", "timeout", "max_attempts", "initial_backoff");

    static final String DEFAULT_DECISIONS_TOPIC = "interim.decisions";
    static final String DEFAULT_DEAD_LETTER_TOPIC = "interim.dead-letters";
    static final String DEFAULT_STATE_TOPIC_PREFIX = "interim.state";
    static final String DEFAULT_GROUP_PREFIX = "interim";
    static final Duration DEFAULT_COMMIT_INTERVAL = Duration.ofMillis(500);
    static final int DEFAULT_TALLY_THREADS = 1;
    static final Duration DEFAULT_STARTUP_TIMEOUT = Duration.ofMinutes(5);
    /** Kafka refuses a group.instance.id over 249 characters; stage suffixes and prefixes are added to this one. */
    private static final Pattern INSTANCE_ID = Pattern.compile("[A-Za-z0-9._-]{1,200}");
    static final String DEFAULT_BIND_ADDRESS = "127.0.0.1";
    static final int DEFAULT_PORT = 8080;

    /** Properties the daemon sets itself: exactly-once and the record format depend on them. */
    private static final Set<String> RESERVED_PROPERTIES = Set.of("group.id", "group.instance.id", "transactional.id",
            "enable.idempotence", "isolation.level", "enable.auto.commit", "key.serializer", "value.serializer",
            "key.deserializer", "value.deserializer");
    private static final Pattern TOPIC = Pattern.compile("[A-Za-z0-9._-]{1,249}");
    private static final Pattern PROPERTY_NAME = Pattern.compile("[A-Za-z0-9._-]+");
    private static final Pattern HOST = Pattern.compile("[A-Za-z0-9._-]+|\\[[0-9A-Fa-f:.]+\\]");
    private static final int MIN_ADMIN_TOKEN = 16;

    private ConnectionReaders() {}

    static Set<String> keys(String... names) {
        return new LinkedHashSet<>(List.of(names));
    }

    // ---- kafka ----

    static KafkaSettings kafka(ConfigNode k, Environment env) {
        k.mapping(KAFKA_KEYS);
        Problems.Checkpoint start = k.checkpoint();
        List<String> servers = k.read("bootstrap_servers", ConnectionReaders::servers, List.of());
        ClientProperties properties = k.read("properties", p -> properties(p, env), ClientProperties.none());
        String decisions = k.read("decisions_topic", ConnectionReaders::topic, DEFAULT_DECISIONS_TOPIC);
        String deadLetters = k.read("dead_letter_topic", ConnectionReaders::topic, DEFAULT_DEAD_LETTER_TOPIC);
        if (decisions != null && decisions.equals(deadLetters)) {
            String key = k.has("dead_letter_topic") ? "dead_letter_topic" : "decisions_topic";
            k.report(k.required(key, "").error(UserText.quoted(decisions) + " is used as both decisions_topic and "
                    + "dead_letter_topic: give each its own topic"));
        }
        String statePrefix = k.read("state_topic_prefix", ConnectionReaders::topic, DEFAULT_STATE_TOPIC_PREFIX);
        String groupPrefix = k.read("consumer_group_prefix", ConnectionReaders::topic, DEFAULT_GROUP_PREFIX);
        List<String> inputTopics = k.readRequired("input_topics", "the list of topics carrying experiment events",
                t -> inputTopics(t, decisions, deadLetters, statePrefix));
        Duration commit = k.read("commit_interval", d -> d.duration(Duration.ofMillis(10), Duration.ofMinutes(1)),
                DEFAULT_COMMIT_INTERVAL);
        Boolean keyed = k.read("input_keyed_by_unit", ConfigNode::bool, false);
        Integer tallyThreads = k.read("tally_threads", t -> t.smallInteger(1, 64), DEFAULT_TALLY_THREADS);
        Optional<String> instanceId = Optional.ofNullable(k.read("instance_id", ConnectionReaders::instanceId, null));
        Duration startupTimeout = k.read("startup_timeout", d -> d.duration(Duration.ofSeconds(1), Duration.ofHours(1)),
                DEFAULT_STARTUP_TIMEOUT);
        start.requireNone();
        return new KafkaSettings(servers, properties, inputTopics, decisions, deadLetters, statePrefix, groupPrefix,
                commit, keyed, tallyThreads, instanceId, startupTimeout);
    }

    private static List<String> servers(ConfigNode at) {
        List<String> servers = new ArrayList<>();
        if (at.json().isTextual()) {
            for (String s : at.text().split(",")) {
                servers.add(broker(at, s.strip()));
            }
        } else {
            for (ConfigNode item : at.elements("host:port addresses")) {
                servers.add(broker(item, item.text()));
            }
        }
        if (servers.isEmpty()) {
            throw at.error("must list at least one host:port, or be left out to start the embedded broker");
        }
        return servers;
    }

    private static String broker(ConfigNode where, String address) {
        int colon = address.lastIndexOf(':');
        String host = colon < 0 ? "" : address.substring(0, colon);
        String port = colon < 0 ? "" : address.substring(colon + 1);
        if (!HOST.matcher(host).matches() || !port.matches("\\d{1,5}") || Integer.parseInt(port) < 1
                || Integer.parseInt(port) > 65535) {
            throw where.error(UserText.quoted(address) + " is not a broker address: write host:port, such as "
                    + "kafka-1.internal:9092");
        }
        return address;
    }

    private static ClientProperties properties(ConfigNode p, Environment env) {
        Problems.Checkpoint start = p.checkpoint();
        Map<String, String> written = new LinkedHashMap<>();
        Map<String, String> resolved = new LinkedHashMap<>();
        for (Map.Entry<String, ConfigNode> e : p.entries("Kafka client property names to values").entrySet()) {
            p.problems().check(() -> property(e.getKey(), e.getValue(), env, written, resolved));
        }
        start.requireNone();
        return new ClientProperties(written, env.reads() ? resolved : null);
    }

    private static void property(String name, ConfigNode value, Environment env, Map<String, String> written,
                                 Map<String, String> resolved) {
        if (name.equals("bootstrap.servers")) {
            throw value.error("set the brokers with kafka.bootstrap_servers instead");
        }
        if (RESERVED_PROPERTIES.contains(name)) {
            throw value.error("is set by interim itself (its exactly-once processing depends on it); remove it");
        }
        if (!PROPERTY_NAME.matcher(name).matches()) {
            throw value.error("is not a Kafka client property name (letters, digits, '.', '_', '-')");
        }
        if (!value.json().isValueNode() || value.json().isNull()) {
            throw value.error("must be a single value (text, number or true/false); got " + value.kind()
                    + ". Write nested property names in full, with dots, such as ssl.truststore.type");
        }
        String text = value.json().asText();
        requireReferenceForCredential(value, name, text);
        written.put(name, text);
        if (env.reads()) {
            resolved.put(name, substitute(value, text, env));
        } else {
            substitute(value, text, null);
        }
    }

    /** A credential must come from the environment, so that the file can be kept in version control. */
    private static void requireReferenceForCredential(ConfigNode at, String name, String text) {
        String lower = name.toLowerCase(Locale.ROOT);
        boolean credential = lower.endsWith(".password") || lower.endsWith(".key") || lower.contains("secret")
                || lower.equals("sasl.jaas.config") && text.toLowerCase(Locale.ROOT).contains("password");
        if (credential && !text.contains("${")) {
            throw at.error("holds a credential, which must not be written in the file: put it in an environment "
                    + "variable and refer to it as ${NAME}, such as ${KAFKA_PASSWORD}");
        }
    }

    /**
     * Replaces each {@code ${NAME}} with the variable's value; {@code $${} writes a literal
     * {@code ${}. With no environment, only checks the references' form.
     */
    private static String substitute(ConfigNode at, String text, Environment env) {
        StringBuilder out = new StringBuilder();
        int i = 0;
        while (i < text.length()) {
            if (text.startsWith("$${", i)) {
                out.append("${");
                i += 3;
            } else if (text.startsWith("${", i)) {
                int end = text.indexOf('}', i + 2);
                if (end < 0) {
                    throw at.error("has '${' without a closing '}': write ${NAME}, or $${ for a literal ${");
                }
                String name = text.substring(i + 2, end);
                if (!Environment.isName(name)) {
                    throw at.error("refers to ${...} holding something that is not an environment variable name "
                            + "(not shown: it may be a credential written in the file); put the value in a variable "
                            + "such as KAFKA_PASSWORD and write ${KAFKA_PASSWORD}");
                }
                if (env != null) {
                    out.append(env.value(at, name));
                }
                i = end + 1;
            } else {
                out.append(text.charAt(i++));
            }
        }
        return out.toString();
    }

    /** This daemon's id in the consumer groups: characters Kafka accepts, room for the stage suffixes. */
    private static String instanceId(ConfigNode i) {
        String text = i.text();
        if (!INSTANCE_ID.matcher(text).matches()) {
            throw i.error("must be 1 to 200 letters, digits, '.', '_' or '-' (it names this daemon in the "
                    + "consumer groups), such as interim-eu-1");
        }
        return text;
    }

    private static String topic(ConfigNode t) {
        String name = t.text();
        if (!TOPIC.matcher(name).matches() || name.equals(".") || name.equals("..")) {
            throw t.error(UserText.quoted(name) + " is not a Kafka topic name: up to 249 letters, digits, '.', '_' "
                    + "or '-'");
        }
        return name;
    }

    /**
     * The input topics: distinct, and none of them one the daemon writes (it would read its own
     * output). A topic setting given as null had a problem of its own and is not compared with.
     */
    private static List<String> inputTopics(ConfigNode inputs, String decisions, String deadLetters, String statePrefix) {
        Problems.Checkpoint start = inputs.checkpoint();
        List<String> names = new ArrayList<>();
        List<ConfigNode> elements = inputs.elements("topic names");
        for (ConfigNode t : elements) {
            String name = inputs.problems().attempt(() -> inputTopic(t, names, decisions, deadLetters, statePrefix));
            if (name != null) {
                names.add(name);
            }
        }
        if (elements.isEmpty()) {
            throw inputs.error("must list at least one topic");
        }
        start.requireNone();
        return names;
    }

    private static String inputTopic(ConfigNode t, List<String> before, String decisions, String deadLetters,
                                     String statePrefix) {
        String name = topic(t);
        if (before.contains(name)) {
            throw t.error("topic " + UserText.quoted(name) + " is listed twice");
        }
        if (name.equals(decisions) || name.equals(deadLetters)) {
            throw t.error(UserText.quoted(name) + " is also the " + (name.equals(decisions) ? "decisions_topic"
                    : "dead_letter_topic") + ": the daemon would read its own output; give them different topics");
        }
        // The state topics are <prefix>-tallies, -units, -looks and -deliveries (StreamSettings).
        if (statePrefix != null && name.startsWith(statePrefix + "-")) {
            throw t.error(UserText.quoted(name) + " starts with '" + statePrefix + "-', the names of the daemon's own state "
                    + "topics (" + statePrefix + "-tallies, -units, -looks, -deliveries); choose another state_topic_prefix");
        }
        return name;
    }

    // ---- events ----

    static EventMapping events(ConfigNode e) {
        e.mapping(EVENTS_KEYS);
        Problems.Checkpoint start = e.checkpoint();
        JsonPointer experiment = e.readRequired("experiment", "the JSON Pointer of the experiment id, such as /experiment",
                Pointers::field);
        JsonPointer arm = e.readRequired("arm", "the JSON Pointer of the arm, such as /arm", Pointers::field);
        JsonPointer unit = e.read("unit", Pointers::field, null);
        JsonPointer time = e.read("time", Pointers::field, null);
        start.requireNone();
        return new EventMapping(experiment, arm, Optional.ofNullable(unit), Optional.ofNullable(time));
    }

    // ---- http ----

    static HttpSettings http(Optional<ConfigNode> section, Environment env) {
        if (section.isEmpty()) {
            return new HttpSettings(DEFAULT_BIND_ADDRESS, DEFAULT_PORT, Optional.empty(), List.of());
        }
        ConfigNode h = section.get().mapping(HTTP_KEYS);
        Problems.Checkpoint start = h.checkpoint();
        String bind = h.read("bind_address", b -> {
            String text = b.text();
            if (!HOST.matcher(text).matches()) {
                throw b.error(UserText.quoted(text) + " is not an address or host name, such as 127.0.0.1 or 0.0.0.0");
            }
            return text;
        }, DEFAULT_BIND_ADDRESS);
        Integer port = h.read("port", p -> p.smallInteger(0, 65535), DEFAULT_PORT);
        Secret token = h.read("admin_token_env", t -> adminToken(t, env), null);
        List<String> allowedHosts = h.read("allowed_hosts", ConnectionReaders::allowedHosts, List.of());
        start.requireNone();
        return new HttpSettings(bind, port, Optional.ofNullable(token), allowedHosts);
    }

    /** Host names as a client writes them in the URL, without scheme, port or path; {@code *} for any. */
    private static List<String> allowedHosts(ConfigNode at) {
        List<String> names = new ArrayList<>();
        for (ConfigNode item : at.elements("host names, such as [monitor.internal], or [\"*\"] to answer any")) {
            String name = item.text();
            if (!name.equals("*") && !HOST.matcher(name).matches()) {
                throw item.error(UserText.quoted(name) + " is not a host name: write the name alone, without scheme, port or "
                        + "path, such as monitor.internal (or \"*\" to answer any Host)");
            }
            names.add(name);
        }
        return names;
    }

    /** A token too short or with spaces is a problem of the environment: recorded, and the token kept. */
    private static Secret adminToken(ConfigNode at, Environment env) {
        Secret token = env.secret(at, "the admin token", "INTERIM_ADMIN_TOKEN");
        if (token.isRead() && (token.reveal().length() < MIN_ADMIN_TOKEN || token.reveal().chars().anyMatch(Character::isWhitespace))) {
            at.reportEnvironment(at.error("the token in " + token.variable() + " must be at least " + MIN_ADMIN_TOKEN
                    + " characters without spaces; generate one with: openssl rand -hex 24"));
        }
        return token;
    }

    // ---- webhook ----

    static WebhookSettings webhook(ConfigNode w, Environment env) {
        w.mapping(WEBHOOK_KEYS);
        Problems.Checkpoint start = w.checkpoint();
        URI url = w.readRequired("url", "the address the kill webhook is POSTed to, such as "
                + "https://flags.internal/hooks/interim", ConnectionReaders::url);
        Secret key = w.readRequired("signing_key_env", "the name of the environment variable holding the signing key, "
                + "such as INTERIM_WEBHOOK_KEY", k -> signingKey(k, env));
        Duration timeout = w.read("timeout", d -> d.duration(Duration.ofMillis(100), Duration.ofMinutes(5)),
                Duration.ofSeconds(5));
        Integer attempts = w.read("max_attempts", a -> a.smallInteger(1, 20), 5);
        Duration backoff = w.read("initial_backoff", d -> d.duration(Duration.ofMillis(10), Duration.ofMinutes(10)),
                Duration.ofSeconds(1));
        start.requireNone();
        return new WebhookSettings(url, key, timeout, attempts, backoff);
    }

    private static URI url(ConfigNode at) {
        String text = at.text();
        URI uri;
        try {
            uri = new URI(text);
        } catch (URISyntaxException e) {
            throw at.error(UserText.quoted(text) + " is not a URL: " + e.getReason());
        }
        String scheme = uri.getScheme() == null ? "" : uri.getScheme().toLowerCase(Locale.ROOT);
        if (!(scheme.equals("http") || scheme.equals("https")) || uri.getHost() == null) {
            throw at.error(UserText.quoted(text) + " must be an absolute http or https URL with a host, such as "
                    + "https://flags.internal/hooks/interim");
        }
        if (uri.getRawUserInfo() != null) {
            throw at.error("must not carry credentials (user:password@): requests are authenticated by their "
                    + "signature; remove them from the URL");
        }
        return uri;
    }

    /**
     * Standard Webhooks keys: base64 of 24 to 64 random bytes, optionally prefixed {@code whsec_}. A
     * key of another form is a problem of the environment: recorded, and the key kept.
     */
    private static Secret signingKey(ConfigNode at, Environment env) {
        Secret key = env.secret(at, "the signing key", "INTERIM_WEBHOOK_KEY");
        if (key.isRead()) {
            String text = key.reveal();
            String body = text.startsWith("whsec_") ? text.substring("whsec_".length()) : text;
            int bytes;
            try {
                bytes = Base64.getDecoder().decode(body).length;
            } catch (IllegalArgumentException e) {
                bytes = -1;
            }
            if (bytes < 24 || bytes > 64) {
                at.reportEnvironment(at.error("the key in " + key.variable() + " must be the base64 of 24 to 64 "
                        + "random bytes, optionally prefixed whsec_; generate one with: echo whsec_$(openssl rand "
                        + "-base64 32)"));
            }
        }
        return key;
    }
}
