package dev.interim.stream;

/** Turns one record's value into exposures and observations. Implementations are stateless. */
public interface EventReader {
    /**
     * Reads {@code value} (the record's bytes) into {@code sink}. Either the whole event is accepted
     * or, on a {@link BadEventException}, nothing of it reaches the sink.
     */
    void read(byte[] value, ObservationSink sink) throws BadEventException;
}
