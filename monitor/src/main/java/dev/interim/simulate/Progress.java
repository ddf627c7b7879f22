package dev.interim.simulate;

/** Told how many runs are done, on the thread that started the simulation, about ten times a second. */
@FunctionalInterface
public interface Progress {
    void update(long done, long total);

    /** Reports nothing. */
    static Progress none() {
        return (done, total) -> { };
    }
}
