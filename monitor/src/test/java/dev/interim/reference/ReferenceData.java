package dev.interim.reference;

import java.io.BufferedReader;
import java.io.IOException;
import java.io.InputStream;
import java.io.InputStreamReader;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/**
 * Reads a reference table kept as a test resource: '#' lines name the source and the tolerance, the
 * first other line is the header, each further line one row.
 */
public final class ReferenceData {
    private ReferenceData() {}

    /** The rows of {@code /reference/NAME}, as column → text. */
    public static List<Map<String, String>> rows(String name) {
        String path = "/reference/" + name;
        InputStream in = ReferenceData.class.getResourceAsStream(path);
        if (in == null) {
            throw new IllegalStateException("missing test resource " + path);
        }
        try (BufferedReader reader = new BufferedReader(new InputStreamReader(in, StandardCharsets.UTF_8))) {
            List<Map<String, String>> rows = new ArrayList<>();
            String[] header = null;
            for (String line; (line = reader.readLine()) != null; ) {
                if (line.isBlank() || line.startsWith("#")) {
                    continue;
                }
                String[] cells = line.split(",", -1);
                if (header == null) {
                    header = cells;
                    continue;
                }
                if (cells.length != header.length) {
                    throw new IllegalStateException(path + ": row has " + cells.length + " cells, header " + header.length);
                }
                Map<String, String> row = new LinkedHashMap<>();
                for (int i = 0; i < cells.length; i++) {
                    row.put(header[i].trim(), cells[i].trim());
                }
                rows.add(row);
            }
            if (rows.isEmpty()) {
                throw new IllegalStateException(path + " has no rows");
            }
            return rows;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }
}
