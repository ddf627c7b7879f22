package dev.interim.events;

import com.fasterxml.jackson.core.JsonPointer;
import java.util.Optional;

/**
 * Where the common fields of an event are, by JSON Pointer (RFC 6901). Each metric names its own
 * field in {@link MetricSource}.
 *
 * @param experiment the experiment id
 * @param arm the arm the event belongs to
 * @param unit the unit id (user, session, device); needed by per-unit metrics
 * @param time the event time, epoch milliseconds or ISO-8601 text; absent: the record's timestamp
 */
public record EventMapping(JsonPointer experiment, JsonPointer arm, Optional<JsonPointer> unit,
                           Optional<JsonPointer> time) {
}
