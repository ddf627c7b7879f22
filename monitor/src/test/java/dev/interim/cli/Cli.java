package dev.interim.cli;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.ArrayList;
import java.util.LinkedHashMap;
import java.util.List;
import java.util.Map;

/** Runs the {@code interim} command line in-process with captured output. */
final class Cli {
    private Cli() {}

    /** What one run produced. */
    record Result(int exit, String out, String err) {
        /** Non-empty lines of stderr. */
        List<String> errLines() {
            return err.lines().filter(l -> !l.isBlank()).toList();
        }

        /** stdout as CSV: the header row's names mapped to columns of cells. */
        Map<String, List<String>> csvColumns() {
            List<String> lines = out.lines().filter(l -> !l.isBlank()).toList();
            String[] header = lines.get(0).split(",", -1);
            Map<String, List<String>> columns = new LinkedHashMap<>();
            for (String name : header) {
                columns.put(name, new ArrayList<>());
            }
            for (String line : lines.subList(1, lines.size())) {
                String[] cells = line.split(",", -1);
                if (cells.length != header.length) {
                    throw new AssertionError("row has " + cells.length + " cells, header " + header.length + ": " + line);
                }
                for (int c = 0; c < cells.length; c++) {
                    columns.get(header[c]).add(cells[c]);
                }
            }
            return columns;
        }

        double[] csvNumbers(String column) {
            List<String> cells = csvColumns().get(column);
            if (cells == null) {
                throw new AssertionError("no column " + column + " in " + out);
            }
            return cells.stream().mapToDouble(Double::parseDouble).toArray();
        }
    }

    static Result run(String... args) {
        StringWriter out = new StringWriter();
        StringWriter err = new StringWriter();
        int exit = Interim.commandLine(new PrintWriter(out, true), new PrintWriter(err, true)).execute(args);
        return new Result(exit, out.toString(), err.toString());
    }

    /** {@code plan} with the given options. */
    static Result plan(String... options) {
        String[] args = new String[options.length + 1];
        args[0] = "plan";
        System.arraycopy(options, 0, args, 1, options.length);
        return run(args);
    }
}
