package dev.interim.simulate;

import dev.interim.text.UserText;
import java.io.PrintWriter;
import java.util.Locale;

/** How {@code interim simulate} prints its report. */
public enum ReportFormat {
    /** Aligned tables and notes for a person. */
    TABLE,
    /** One row per comparison and effect ({@link ReportCsv}). */
    CSV,
    /** One object ({@link ReportJson}). */
    JSON;

    public static ReportFormat parse(String text) {
        String s = text == null ? "" : text.strip().toLowerCase(Locale.ROOT);
        return switch (s) {
            case "table" -> TABLE;
            case "csv" -> CSV;
            case "json" -> JSON;
            default -> throw new IllegalArgumentException("unknown --format " + UserText.quoted(text) + ": use table, csv or json");
        };
    }

    public void write(SimulationReport report, PrintWriter out) {
        switch (this) {
            case TABLE -> ReportTable.write(report, out);
            case CSV -> ReportCsv.write(report, out);
            case JSON -> ReportJson.write(report, out);
            default -> throw new IllegalStateException(name());
        }
    }
}
