package dev.interim.config;

import java.util.Map;
import java.util.Objects;
import java.util.regex.Pattern;

/**
 * Where secrets come from: environment variables, named in the file and read here. Messages name the
 * variable, never its value. A configuration can also be checked without its secrets (in CI, where
 * they are absent): the variables are then named but not read.
 */
final class Environment {
    private static final Pattern NAME = Pattern.compile("[A-Za-z_][A-Za-z0-9_]*");

    private final Map<String, String> variables;

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

    /** The name of a variable given at {@code at}, checked for form. */
    static String variableName(ConfigNode at) {
        String name = at.text();
        if (!NAME.matcher(name).matches()) {
            throw at.error("'" + name + "' is not an environment variable name (letters, digits and '_', "
                    + "not starting with a digit): give the variable's name, never the secret itself");
        }
        return name;
    }

    /** The secret in the variable named at {@code at}. */
    Secret secret(ConfigNode at) {
        String name = variableName(at);
        if (!reads()) {
            return Secret.unread(name);
        }
        String value = variables.get(name);
        if (value == null || value.isEmpty()) {
            throw at.error("environment variable " + name + " is " + (value == null ? "not set" : "empty")
                    + "; export it before starting interim");
        }
        return Secret.of(name, value);
    }

    /** The value of the variable {@code name}, referenced at {@code at}; the caller checked the name. */
    String value(ConfigNode at, String name) {
        String value = variables.get(name);
        if (value == null) {
            throw at.error("refers to environment variable " + name + ", which is not set; export it before "
                    + "starting interim");
        }
        return value;
    }

    static boolean isName(String text) {
        return NAME.matcher(text).matches();
    }
}
