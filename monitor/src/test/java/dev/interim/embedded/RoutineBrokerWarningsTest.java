package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;

import ch.qos.logback.classic.Level;
import ch.qos.logback.classic.LoggerContext;
import ch.qos.logback.classic.spi.LoggingEvent;
import ch.qos.logback.core.spi.FilterReply;
import org.junit.jupiter.api.Test;

/** The messages are those Kafka 4.4 logged on starts, stops and a restart after a crash of the embedded broker. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class RoutineBrokerWarningsTest {
    private static final String CONTROLLER = "org.apache.kafka.controller.QuorumController";
    private static final String NETWORK_CLIENT = "org.apache.kafka.clients.NetworkClient";

    private final RoutineBrokerWarnings filter = new RoutineBrokerWarnings();
    private final LoggerContext context = new LoggerContext();

    @Test
    void dropsTheControllerActivationWarningOfEveryStart() {
        assertThat(decide(CONTROLLER, Level.WARN, "[QuorumController id=1] Performing controller activation. "
                + "The metadata log appears to be empty. Appending 6 bootstrap record(s) in metadata transaction "
                + "at metadata.version 4.4-IV2 from bootstrap source 'bootstrap'.")).isEqualTo(FilterReply.DENY);
        assertThat(decide(CONTROLLER, Level.WARN, "[QuorumController id=1] Performing controller activation."))
                .isEqualTo(FilterReply.DENY);
    }

    @Test
    void dropsTheDoubleCloseWarningOfTheBrokersRegistrationChannel() {
        assertThat(decide(NETWORK_CLIENT, Level.WARN, "[NodeToControllerChannelManager id=1 name=registration] "
                + "Attempting to close NetworkClient that has already been closed.")).isEqualTo(FilterReply.DENY);
    }

    @Test
    void dropsTheTransactionCoordinatorCallingItsOwnBrokerWhileARestartAfterACrashRegisters() {
        assertThat(decide(NETWORK_CLIENT, Level.WARN, "[TransactionCoordinator id=1] Connection to node 1 "
                + "(/127.0.0.1:40529) could not be established. Node may not be available.")).isEqualTo(FilterReply.DENY);
    }

    @Test
    void dropsTheRegistrationRaceOfARestartedSingleNodeButNoOtherError() {
        assertThat(decide("kafka.server.ControllerApis", Level.ERROR, "[ControllerApis nodeId=1] Unexpected error handling "
                + "request RequestHeader(apiKey=CONTROLLER_REGISTRATION, apiVersion=0) -- NotControllerException"))
                .isEqualTo(FilterReply.DENY);
        assertThat(decide("kafka.server.ControllerApis", Level.ERROR, "[ControllerApis nodeId=1] Unexpected error handling "
                + "request RequestHeader(apiKey=PRODUCE, apiVersion=11)")).isEqualTo(FilterReply.NEUTRAL);
    }

    @Test
    void letsEveryOtherMessagePass() {
        // The same text from a client of our own, or at another level, or another warning of the logger.
        assertThat(decide(NETWORK_CLIENT, Level.WARN, "[Producer clientId=p1] "
                + "Attempting to close NetworkClient that has already been closed.")).isEqualTo(FilterReply.NEUTRAL);
        assertThat(decide(NETWORK_CLIENT, Level.WARN, "[Consumer clientId=c1, groupId=tally] Connection to node 1 "
                + "(/127.0.0.1:9092) could not be established. Node may not be available.")).isEqualTo(FilterReply.NEUTRAL);
        assertThat(decide(CONTROLLER, Level.ERROR, "[QuorumController id=1] Performing controller activation."))
                .isEqualTo(FilterReply.NEUTRAL);
        assertThat(decide(CONTROLLER, Level.WARN, "[QuorumController id=1] Renouncing the leadership due to a "
                + "metadata log event.")).isEqualTo(FilterReply.NEUTRAL);
        assertThat(decide("dev.interim.stream.TallyStage", Level.WARN, "Performing controller activation."))
                .isEqualTo(FilterReply.NEUTRAL);
    }

    private FilterReply decide(String logger, Level level, String message) {
        LoggingEvent event = new LoggingEvent(RoutineBrokerWarningsTest.class.getName(),
                context.getLogger(logger), level, message, null, null);
        return filter.decide(event);
    }
}
