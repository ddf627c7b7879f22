package dev.interim.stats;

/** Argument checks shared by the tests, so every message states the rule it enforces. */
final class Arguments {

    private Arguments() {
    }

    static double finite(String name, double value) {
        if (!Double.isFinite(value)) {
            throw new IllegalArgumentException(name + " must be a finite number, was " + value);
        }
        return value;
    }

    static double positive(String name, double value) {
        if (!(value > 0.0 && value < Double.POSITIVE_INFINITY)) {
            throw new IllegalArgumentException(name + " must be finite and > 0, was " + value);
        }
        return value;
    }

    static <T> T notNull(String name, T value) {
        if (value == null) {
            throw new IllegalArgumentException(name + " must not be null");
        }
        return value;
    }

    static void atLeast(String test, String what, long count, long minimum) {
        if (count < minimum) {
            throw new InsufficientDataException(
                    test + " needs at least " + minimum + " " + what + ", had " + count);
        }
    }

    /**
     * {@code difference / standardError}, with the package's zero-variance rule: a zero standard
     * error and a non-zero difference is infinitely strong evidence (±∞, p-value 0); a zero
     * standard error and no difference is 0/0, which no test can judge, so it is refused.
     */
    static double ratio(String test, double difference, double standardError) {
        if (standardError > 0.0) {
            return difference / standardError;
        }
        if (difference == 0.0) {
            throw new InsufficientDataException(test + ": the data have no variation and the estimate equals"
                    + " the null value, so the statistic is 0/0 and undefined; wait for data that vary");
        }
        return Math.copySign(Double.POSITIVE_INFINITY, difference);
    }
}
