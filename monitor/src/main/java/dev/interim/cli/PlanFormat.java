package dev.interim.cli;

import dev.interim.text.UserText;
import java.io.PrintWriter;
import java.util.Arrays;
import java.util.Locale;
import java.util.stream.Collectors;

/** The output formats of {@code interim plan}. */
enum PlanFormat {
    TABLE {
        @Override
        void write(PlanReport report, PrintWriter out) {
            PlanTable.write(report, out);
        }
    },
    CSV {
        @Override
        void write(PlanReport report, PrintWriter out) {
            PlanCsv.write(report, out);
        }
    },
    JSON {
        @Override
        void write(PlanReport report, PrintWriter out) {
            PlanJson.write(report, out);
        }
    };

    abstract void write(PlanReport report, PrintWriter out);

    String label() {
        return name().toLowerCase(Locale.ROOT);
    }

    static PlanFormat parse(String text) {
        for (PlanFormat f : values()) {
            if (f.label().equalsIgnoreCase(text.strip())) {
                return f;
            }
        }
        throw new IllegalArgumentException("unknown --format " + UserText.quoted(text) + ": use "
                + Arrays.stream(values()).map(PlanFormat::label).collect(Collectors.joining(", ")));
    }
}
