package dev.interim.embedded;

import ch.qos.logback.classic.Level;
import ch.qos.logback.classic.spi.ILoggingEvent;
import ch.qos.logback.core.filter.Filter;
import ch.qos.logback.core.spi.FilterReply;
import java.util.List;

/**
 * A Logback filter that drops the warnings the embedded broker logs when all is well, so that a
 * warning on the console means something. Kafka logs at WARN that the controller activates (each
 * start), that its registration channel's client was already closed (each stop), and, every 50 ms
 * while a broker restarted after a crash waits for its old registration to expire, that its
 * transaction coordinator cannot reach the broker yet; and, at ERROR, that a restarted node's
 * controller registration arrived a moment before the controller was active (it is retried). None
 * is a fault. Every other warning and error, from these loggers too, passes.
 *
 * <p>Used from {@code logback.xml}: {@code <filter class="dev.interim.embedded.RoutineBrokerWarnings"/>}.
 */
public final class RoutineBrokerWarnings extends Filter<ILoggingEvent> {

    /** A routine warning: the logger it comes from, and text found in every such message. */
    private record Routine(Level level, String logger, String... fragments) {
        boolean matches(ILoggingEvent event) {
            if (!level.equals(event.getLevel()) || !logger.equals(event.getLoggerName())) {
                return false;
            }
            String message = event.getFormattedMessage();
            for (ch.qos.logback.classic.spi.IThrowableProxy t = event.getThrowableProxy(); t != null; t = t.getCause()) {
                message = message + " | " + t.getClassName() + ": " + t.getMessage();
            }
            for (String fragment : fragments) {
                if (message == null || !message.contains(fragment)) {
                    return false;
                }
            }
            return true;
        }
    }

    private static final List<Routine> ROUTINE = List.of(
            new Routine(Level.WARN, "org.apache.kafka.controller.QuorumController", "Performing controller activation."),
            new Routine(Level.WARN, "org.apache.kafka.clients.NetworkClient", "NodeToControllerChannelManager",
                    "Attempting to close NetworkClient that has already been closed."),
            new Routine(Level.WARN, "org.apache.kafka.clients.NetworkClient", "[TransactionCoordinator id=",
                    "could not be established. Node may not be available."),
            // Logged at ERROR when a restarted single node registers its controller a moment before
            // the controller is active; the registration is retried and succeeds.
            new Routine(Level.ERROR, "kafka.server.ControllerApis", "CONTROLLER_REGISTRATION", "NotControllerException"));

    @Override
    public FilterReply decide(ILoggingEvent event) {
        if (event.getLevel() == Level.WARN || event.getLevel() == Level.ERROR) {
            for (Routine routine : ROUTINE) {
                if (routine.matches(event)) {
                    return FilterReply.DENY;
                }
            }
        }
        return FilterReply.NEUTRAL;
    }
}
