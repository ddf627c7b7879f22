package dev.interim.config;

/**
 * A secret read from an environment variable (a signing key, a token). It knows the variable's name,
 * which may be shown, and hides the value: {@link #toString()}, and so every record that holds one,
 * prints the variable's name only. Only {@link #reveal()} gives the value, to the code that signs or
 * authenticates with it. Equality is identity, so comparing configurations never compares secrets.
 */
public final class Secret {
    private final String variable;
    private final String value;

    private Secret(String variable, String value) {
        this.variable = variable;
        this.value = value;
    }

    /** A secret whose value was read from {@code variable}. */
    public static Secret of(String variable, String value) {
        if (value == null) {
            throw new IllegalArgumentException("environment variable " + variable + " is not set");
        }
        return new Secret(variable, value);
    }

    /** A secret that was named but deliberately not read (a check without the secrets at hand). */
    static Secret unread(String variable) {
        return new Secret(variable, null);
    }

    /** The environment variable that holds the value. */
    public String variable() {
        return variable;
    }

    /** True when the value was read; false after a check that skipped the environment. */
    public boolean isRead() {
        return value != null;
    }

    /**
     * The value. Pass it straight to the code that uses it; never log or print it.
     *
     * @throws IllegalStateException when the configuration was checked without reading the environment
     */
    public String reveal() {
        if (value == null) {
            throw new IllegalStateException("the secret in " + variable + " was not read (the configuration was "
                    + "loaded without its secrets)");
        }
        return value;
    }

    @Override
    public String toString() {
        return "Secret[from $" + variable + "]";
    }
}
