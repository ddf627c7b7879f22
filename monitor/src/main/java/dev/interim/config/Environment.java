package dev.interim.config;

import java.util.HashSet;
import java.util.Map;
import java.util.Objects;
import java.util.Set;
import java.util.regex.Matcher;
import java.util.regex.Pattern;

/**
 * Where secrets come from: environment variables, named in the file and read here. Messages name the
 * variable, never its value. A configuration can also be checked without its secrets (in CI, where
 * they are absent): the variables are then named but not read.
 *
 * <p>A secret is sometimes written where its variable's name belongs. A name is therefore only
 * accepted, and only ever shown, when it is a plausible one (see {@link #isName}); anything else is
 * refused without being repeated, since it may be the secret itself.
 */
final class Environment {
    /** The longest name accepted; longer "names" are far more often pasted keys or tokens. */
    static final int MAX_NAME = 64;
    /** The portable form (letters, digits and '_', not starting with a digit; IEEE Std 1003.1, 8.1). */
    private static final Pattern NAME = Pattern.compile("[A-Za-z_][A-Za-z0-9_]*");
    /** The words of a name part: a capitalised word, a run of capitals, of small letters, or of digits. */
    private static final Pattern WORD = Pattern.compile("[A-Z][a-z]+|[A-Z]+(?![a-z])|[a-z]+|[0-9]+");
    /** A name written as a reference: $NAME or ${NAME}. */
    private static final Pattern REFERENCE = Pattern.compile("\\$\\{?([A-Za-z_][A-Za-z0-9_]*)}?");

    private final Map<String, String> variables;
    /** Variables found missing, each reported once: at the first place that refers to it. */
    private final Set<String> missing = new HashSet<>();

    private Environment(Map<String, String> variables) {
        this.variables = variables;
    }

    static Environment of(Map<String, String> variables) {
        return new Environment(Objects.requireNonNull(variables, "variables"));
    }

    /** Names variables without reading them. */
    static Environment unread() {
        return new Environment(null);
    }

    boolean reads() {
        return variables != null;
    }

    /**
     * The name of the variable holding {@code what} (such as "the signing key"), given at {@code at};
     * a value that is not a plausible name is refused without being shown, with {@code example} as a
     * name to use instead.
     */
    static String variableName(ConfigNode at, String what, String example) {
        if (at.json().isContainerNode()) {
            throw at.error("must be the name of the environment variable holding " + what + ", such as " + example
                    + "; got " + at.kind());
        }
        String name = at.json().isTextual() ? at.json().textValue().strip() : null;
        if (name != null && isName(name)) {
            return name;
        }
        Matcher reference = REFERENCE.matcher(name == null ? "" : name);
        if (reference.matches() && isName(reference.group(1))) {
            throw at.error("expects the bare name of the environment variable holding " + what + ": write "
                    + reference.group(1) + ", without '$' or braces");
        }
        throw at.error("expects the name of the environment variable holding " + what + ", and the value given "
                + "is not a variable name (not shown: it may be the secret itself); put the secret in a variable "
                + "such as " + example + " and write that name here");
    }

    /**
     * The secret in the variable named at {@code at}. A variable that is not set or empty is a
     * problem of the environment: recorded, reported after those of the values, and the secret is
     * then returned unread.
     */
    Secret secret(ConfigNode at, String what, String example) {
        String name = variableName(at, what, example);
        if (!reads()) {
            return Secret.unread(name);
        }
        String value = variables.get(name);
        if (value == null || value.isEmpty()) {
            if (value == null && !missing.add(name)) {
                return Secret.unread(name);
            }
            at.reportEnvironment(at.error("environment variable " + name + " is " + (value == null ? "not set" : "empty")
                    + "; export it (it holds " + what + ") before starting interim"));
            return Secret.unread(name);
        }
        return Secret.of(name, value);
    }

    /**
     * The value of the variable {@code name}, referenced at {@code at}; the caller checked the name.
     * One that is not set is recorded as a problem of the environment, and read as empty.
     */
    String value(ConfigNode at, String name) {
        String value = variables.get(name);
        if (value == null) {
            if (missing.add(name)) {
                at.reportEnvironment(at.error("refers to environment variable " + name + ", which is not set; export "
                        + "it before starting interim"));
            }
            return "";
        }
        return value;
    }

    /**
     * Whether {@code text} is a plausible environment variable name: at most {@value #MAX_NAME}
     * letters, digits and '_', not starting with a digit, whose parts between underscores read as
     * words. A part of 12 characters or more that breaks into words of under 3 characters on average
     * (case and digits alternating, as in {@code a3F9kQ2...}) is what keys and tokens look like, not
     * names: {@code INTERIM_WEBHOOK_KEY}, {@code webhookSigningKey} and {@code X509_CERT_PATH} are
     * names, {@code S3cr3tPassw0rd} and the output of {@code openssl rand -hex 24} are not.
     */
    static boolean isName(String text) {
        if (text.isEmpty() || text.length() > MAX_NAME || !NAME.matcher(text).matches()) {
            return false;
        }
        for (String part : text.split("_")) {
            if (part.length() >= 12) {
                int words = 0;
                for (Matcher w = WORD.matcher(part); w.find(); ) {
                    words++;
                }
                if (part.length() < 3 * words) {
                    return false;
                }
            }
        }
        return true;
    }
}
