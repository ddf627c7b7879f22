package dev.interim.embedded;

import static org.assertj.core.api.Assertions.assertThat;
import static org.assertj.core.api.Assertions.assertThatThrownBy;

import org.junit.jupiter.api.Test;

// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class TopicTest {
    @Test
    void factoriesSetTheCleanupPolicy() {
        assertThat(Topic.compacted("tallies", 4).cleanup().policy()).isEqualTo("compact");
        assertThat(Topic.deleting("events", 1).cleanup().policy()).isEqualTo("delete");
    }

    @Test
    void aTopicNeedsANameAndAtLeastOnePartition() {
        assertThatThrownBy(() -> Topic.deleting("events", 0))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("topic events: partitions must be at least 1, got 0");
        assertThatThrownBy(() -> Topic.compacted(" ", 1))
                .isInstanceOf(IllegalArgumentException.class)
                .hasMessage("topic name must not be blank");
    }
}
