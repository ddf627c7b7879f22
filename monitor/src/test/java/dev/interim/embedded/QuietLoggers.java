package dev.interim.embedded;

import ch.qos.logback.classic.Level;
import ch.qos.logback.classic.Logger;
import java.util.LinkedHashMap;
import java.util.Map;
import org.slf4j.LoggerFactory;

/** Turns loggers off for the span of a test that provokes errors on purpose, then restores them. */
final class QuietLoggers implements AutoCloseable {
    private final Map<Logger, Level> previous = new LinkedHashMap<>();

    private QuietLoggers() {
    }

    static QuietLoggers silence(String... names) {
        QuietLoggers quiet = new QuietLoggers();
        for (String name : names) {
            Logger logger = (Logger) LoggerFactory.getLogger(name);
            quiet.previous.put(logger, logger.getLevel());
            logger.setLevel(Level.OFF);
        }
        return quiet;
    }

    @Override
    public void close() {
        previous.forEach(Logger::setLevel);
    }
}
