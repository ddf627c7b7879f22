package dev.interim.simulate;

import java.io.PrintWriter;
import java.util.ArrayList;
import java.util.List;

/** Aligned columns for terminal output, two spaces apart: text left, numbers right. Used once. */
final class Columns {
    private final List<String[]> rows = new ArrayList<>();
    private final boolean[] left;

    /** Headers; a header starting with '<' is a left-aligned column (the '<' is not printed). */
    Columns(String... headers) {
        left = new boolean[headers.length];
        String[] names = new String[headers.length];
        for (int c = 0; c < headers.length; c++) {
            left[c] = headers[c].startsWith("<");
            names[c] = left[c] ? headers[c].substring(1) : headers[c];
        }
        rows.add(names);
    }

    Columns row(String... cells) {
        if (cells.length != left.length) {
            throw new IllegalStateException("a row needs " + left.length + " cells, got " + cells.length);
        }
        rows.add(cells);
        return this;
    }

    void print(PrintWriter out, String indent) {
        int[] widths = new int[left.length];
        for (String[] row : rows) {
            for (int c = 0; c < left.length; c++) {
                widths[c] = Math.max(widths[c], row[c].length());
            }
        }
        for (String[] row : rows) {
            StringBuilder line = new StringBuilder(indent);
            for (int c = 0; c < left.length; c++) {
                String pad = " ".repeat(widths[c] - row[c].length());
                line.append(c == 0 ? "" : "  ").append(left[c] ? row[c] + pad : pad + row[c]);
            }
            out.println(line.toString().stripTrailing());
        }
    }
}
