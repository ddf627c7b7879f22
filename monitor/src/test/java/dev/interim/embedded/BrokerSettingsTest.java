package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatCode;

import java.io.IOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Properties;
import kafka.server.KafkaConfig;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class BrokerSettingsTest {
    @TempDir
    Path dataDir;

    @Test
    void kafkaAcceptsTheSettingsOfASingleNode() {
        Properties settings = BrokerSettings.of(dataDir, 40_001, 40_002);

        assertThatCode(() -> KafkaConfig.fromProps(settings, false)).doesNotThrowAnyException();
    }

    @Test
    void thePortsOfTheLastStartAreReadBackFromTheWrittenFile() throws IOException {
        BrokerSettings.write(BrokerSettings.of(dataDir, 40_001, 40_002), dataDir);

        assertThat(BrokerSettings.previousPorts(dataDir)).containsExactly(40_001, 40_002);
    }

    @Test
    void withoutAReadableFileNoPortIsPreferred() throws IOException {
        assertThat(BrokerSettings.previousPorts(dataDir)).containsExactly(FreePorts.ANY, FreePorts.ANY);

        Files.writeString(dataDir.resolve(BrokerSettings.CONFIG_FILE_NAME), "listeners=nonsense\n");
        assertThat(BrokerSettings.previousPorts(dataDir)).containsExactly(FreePorts.ANY, FreePorts.ANY);
    }
}
