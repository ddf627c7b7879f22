package dev.interim.embedded;

import java.util.Objects;

/**
 * A topic to create on the embedded broker: its name, partition count and cleanup policy.
 * Replication is always 1 (a single node).
 */
public record Topic(String name, int partitions, Cleanup cleanup) {

    /** What the broker does with old records of a topic ({@code cleanup.policy}). */
    public enum Cleanup {
        /** Old segments are deleted by time and size ({@code delete}): event and decision streams. */
        DELETE("delete"),
        /** Only the latest record per key is kept ({@code compact}): state and changelog topics. */
        COMPACT("compact");

        private final String policy;

        Cleanup(String policy) {
            this.policy = policy;
        }

        /** The value of the {@code cleanup.policy} topic configuration. */
        public String policy() {
            return policy;
        }
    }

    public Topic {
        Objects.requireNonNull(name, "name");
        Objects.requireNonNull(cleanup, "cleanup");
        if (name.isBlank()) {
            throw new IllegalArgumentException("topic name must not be blank");
        }
        if (partitions < 1) {
            throw new IllegalArgumentException(
                    "topic " + name + ": partitions must be at least 1, got " + partitions);
        }
    }

    /** A topic whose old records are deleted by retention. */
    public static Topic deleting(String name, int partitions) {
        return new Topic(name, partitions, Cleanup.DELETE);
    }

    /** A compacted topic: the latest record per key is kept. */
    public static Topic compacted(String name, int partitions) {
        return new Topic(name, partitions, Cleanup.COMPACT);
    }
}
