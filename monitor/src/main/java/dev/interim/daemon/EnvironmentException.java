package dev.interim.daemon;

/**
 * The daemon cannot run here as configured, for a reason outside the program: the HTTP port is in
 * use, the bind address is not one of this machine's, the brokers cannot be reached, a Kafka client
 * property has a value the clients refuse, another running daemon claims the same instance id. The
 * message is one line that names the cause and the setting or action that fixes it; the command line
 * prints it and exits with code 2, as for bad input, not 1 (a bug to report).
 */
public final class EnvironmentException extends RuntimeException {
    private static final long serialVersionUID = 1L;

    public EnvironmentException(String message) {
        super(message);
    }

    public EnvironmentException(String message, Throwable cause) {
        super(message, cause);
    }
}
