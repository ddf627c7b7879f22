package dev.interim.config;

/**
 * An invalid configuration. The message names where (the file, when there is one, and the key path
 * such as {@code experiments[0].metrics[1].alpha}), the value when it is not a secret, the rule, and
 * what to do. It is an {@link IllegalArgumentException} so that the command line reports it as bad
 * input (one line, exit code 2).
 */
public final class ConfigException extends IllegalArgumentException {
    private static final long serialVersionUID = 1L;

    private final String file;
    private final String keyPath;
    private final String problem;

    /**
     * @param keyPath where in the file, or empty for the file as a whole
     * @param problem what is wrong and what to do; never a secret's value
     */
    public ConfigException(String keyPath, String problem) {
        this(null, keyPath, problem);
    }

    private ConfigException(String file, String keyPath, String problem) {
        super(message(file, keyPath, problem));
        this.file = file;
        this.keyPath = keyPath;
        this.problem = problem;
    }

    /** The same problem, located in {@code file}. */
    ConfigException in(String fileName) {
        ConfigException located = new ConfigException(fileName, keyPath, problem);
        located.setStackTrace(getStackTrace());
        return located;
    }

    /** The key path of the offending setting, such as {@code kafka.commit_interval}; empty for the whole file. */
    public String keyPath() {
        return keyPath;
    }

    /** The rule broken and what to do, without the location. */
    public String problem() {
        return problem;
    }

    /** The file the configuration came from, or null when it was parsed from text. */
    public String file() {
        return file;
    }

    private static String message(String file, String keyPath, String problem) {
        StringBuilder m = new StringBuilder();
        if (file != null) {
            m.append(file).append(": ");
        }
        if (keyPath != null && !keyPath.isEmpty()) {
            m.append(keyPath).append(": ");
        }
        return m.append(problem).toString();
    }
}
