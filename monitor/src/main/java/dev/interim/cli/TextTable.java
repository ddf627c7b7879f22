package dev.interim.cli;

import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;

/** Right-aligned columns for terminal output, two spaces apart. Mutable builder, used once. */
final class TextTable {
    private final List<String[]> rows = new ArrayList<>();
    private final int columns;

    TextTable(String... headers) {
        this.columns = headers.length;
        rows.add(headers);
    }

    TextTable row(String... cells) {
        if (cells.length != columns) {
            throw new IllegalStateException("a row needs " + columns + " cells, got " + cells.length);
        }
        rows.add(cells);
        return this;
    }

    void print(PrintWriter out, String indent) {
        int[] widths = new int[columns];
        for (String[] row : rows) {
            for (int c = 0; c < columns; c++) {
                widths[c] = Math.max(widths[c], row[c].length());
            }
        }
        for (String[] row : rows) {
            StringBuilder line = new StringBuilder(indent);
            for (int c = 0; c < columns; c++) {
                line.append(c == 0 ? "" : "  ").append(" ".repeat(widths[c] - row[c].length())).append(row[c]);
            }
            out.println(line);
        }
    }
}
