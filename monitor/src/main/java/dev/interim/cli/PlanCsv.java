package dev.interim.cli;

import dev.interim.sequential.Look;
import java.io.PrintWriter;
import java.math.BigDecimal;
import java.util.List;
import java.util.stream.Collectors;

/**
 * The looks as CSV: a header row, then one row per look, comma-separated, one record per line (no
 * field ever needs quoting); an absent boundary is an empty cell. The sample-size summary is not
 * repeated here: the table and JSON carry it.
 */
final class PlanCsv {
    private PlanCsv() {}

    static void write(PlanReport report, PrintWriter out) {
        List<LookField> fields = LookField.of(report);
        out.print(fields.stream().map(LookField::name).collect(Collectors.joining(",")));
        out.print('\n');
        for (Look look : report.looks()) {
            out.print(fields.stream().map(f -> cell(f.value().apply(look))).collect(Collectors.joining(",")));
            out.print('\n');
        }
        out.flush();
    }

    private static String cell(Number n) {
        if (n == null) {
            return "";
        }
        return n instanceof BigDecimal d ? d.toPlainString() : n.toString();
    }
}
