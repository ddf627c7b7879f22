package dev.interim.config;

import java.util.ArrayList;
import java.util.List;
import java.util.function.Supplier;

/**
 * The problems found while reading one configuration, so that a file is refused with all of them at
 * once. The readers record a problem and go on with the next key; a value that cannot be built
 * because a part of it is wrong is {@linkplain Abandoned abandoned} (its problems are already
 * recorded), and whatever depends on it is not checked. Problems of the environment (a secret's
 * variable not set, a key or token not acceptable) are kept apart and reported after the values.
 */
final class Problems {
    private final List<ConfigException> values = new ArrayList<>();
    private final List<ConfigException> environment = new ArrayList<>();
    /** Reads that failed: value problems recorded, and reads abandoned for a problem recorded earlier. */
    private int failures;

    /**
     * Thrown by a reader that cannot build its value because of problems already recorded: it
     * carries no message and no stack, and is never reported itself.
     */
    static final class Abandoned extends RuntimeException {
        private static final long serialVersionUID = 1L;

        Abandoned() {
            super(null, null, false, false);
        }
    }

    /** A point to compare with: did a read fail since? */
    final class Checkpoint {
        private final int at = failures;

        /** Abandons the value being read when one of its parts failed since this point. */
        void requireNone() {
            if (failures > at) {
                throw new Abandoned();
            }
        }
    }

    void add(ConfigException problem) {
        values.add(problem);
        failures++;
    }

    void addEnvironment(ConfigException problem) {
        environment.add(problem);
    }

    Checkpoint checkpoint() {
        return new Checkpoint();
    }

    /** The value {@code read} returns; or, when it fails, null after recording why. */
    <T> T attempt(Supplier<T> read) {
        try {
            return read.get();
        } catch (ConfigException e) {
            add(e);
            return null;
        } catch (Abandoned e) {
            failures++;
            return null;
        }
    }

    /** Runs {@code check}, recording its problem if it has one; whether it passed. */
    boolean check(Runnable check) {
        try {
            check.run();
            return true;
        } catch (ConfigException e) {
            add(e);
            return false;
        } catch (Abandoned e) {
            failures++;
            return false;
        }
    }

    boolean isEmpty() {
        return values.isEmpty() && environment.isEmpty();
    }

    /** Throws every problem recorded, values first, as one {@link ConfigException}; returns when there is none. */
    void throwIfAny() {
        if (isEmpty()) {
            return;
        }
        List<ConfigException> all = new ArrayList<>(values);
        all.addAll(environment);
        throw ConfigException.of(all);
    }
}
