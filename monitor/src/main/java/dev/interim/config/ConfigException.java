package dev.interim.config;

import java.util.ArrayList;
import java.util.List;

/**
 * An invalid configuration. The message names where (the file, when there is one, and the key path
 * such as {@code experiments[0].metrics[1].alpha}), the value when it is not a secret (quoted through
 * {@link dev.interim.text.UserText}), the rule, and what to do. It is an
 * {@link IllegalArgumentException} so that the command line reports it as bad input (exit code 2).
 *
 * <p>A file with several problems is refused with all of them at once: {@link #problems()} lists
 * them, each a ConfigException of its own (values first, then the environment's: secrets not set or
 * not acceptable). A single problem is its own one-element list.
 */
public final class ConfigException extends IllegalArgumentException {
    private static final long serialVersionUID = 1L;

    private final String file;
    private final String keyPath;
    private final String problem;
    private final List<ConfigException> problems;

    /**
     * @param keyPath where in the file, or empty for the file as a whole
     * @param problem what is wrong and what to do; never a secret's value
     */
    public ConfigException(String keyPath, String problem) {
        this(null, keyPath, problem, null);
    }

    private ConfigException(String file, String keyPath, String problem, List<ConfigException> problems) {
        super(problems == null ? message(file, keyPath, problem) : message(file, "", problem));
        this.file = file;
        this.keyPath = keyPath;
        this.problem = problem;
        this.problems = problems == null ? null : List.copyOf(problems);
    }

    /** All of {@code found} (at least one) as one exception: the only one itself, or a list of them. */
    static ConfigException of(List<ConfigException> found) {
        if (found.isEmpty()) {
            throw new IllegalArgumentException("no problem to report");
        }
        if (found.size() == 1) {
            return found.get(0);
        }
        StringBuilder summary = new StringBuilder().append(found.size()).append(" problems: ");
        for (int i = 0; i < found.size(); i++) {
            ConfigException p = found.get(i);
            summary.append(i == 0 ? "" : "; ").append('(').append(i + 1).append(") ").append(message(null, p.keyPath, p.problem));
        }
        return new ConfigException(found.get(0).file, "", summary.toString(), found);
    }

    /** The same problem (or problems), located in {@code file}. */
    ConfigException in(String fileName) {
        ConfigException located;
        if (problems == null) {
            located = new ConfigException(fileName, keyPath, problem, null);
        } else {
            List<ConfigException> each = new ArrayList<>();
            problems.forEach(p -> each.add(p.in(fileName)));
            located = new ConfigException(fileName, keyPath, problem, each);
        }
        located.setStackTrace(getStackTrace());
        return located;
    }

    /**
     * Every problem found, in the order to report them: values in file order, then those of the
     * environment. A single problem is a list of itself.
     */
    public List<ConfigException> problems() {
        return problems == null ? List.of(this) : problems;
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
