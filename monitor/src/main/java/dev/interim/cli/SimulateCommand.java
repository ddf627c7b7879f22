package dev.interim.cli;

import dev.interim.config.ConfigLoader;
import dev.interim.events.MappedExperiment;
import dev.interim.config.InterimConfig;
import dev.interim.sequential.Fractions;
import dev.interim.simulate.EffectUnit;
import dev.interim.simulate.Progress;
import dev.interim.simulate.ReportChart;
import dev.interim.simulate.ReportFormat;
import dev.interim.simulate.SimulatedComparison;
import dev.interim.simulate.Simulation;
import dev.interim.simulate.SimulationReport;
import dev.interim.text.Numbers;
import dev.interim.text.UserText;
import java.io.IOException;
import java.io.InputStream;
import java.io.PrintWriter;
import java.nio.charset.StandardCharsets;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.Arrays;
import java.util.LinkedHashSet;
import java.util.List;
import java.util.Locale;
import java.util.Set;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code interim simulate}: the operating characteristics of each configured metric's design by
 * Monte Carlo (see {@link dev.interim.simulate}). Options are checked here, with messages that name
 * them, before any run starts.
 */
@Command(name = "simulate",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        sortOptions = false,
        description = {
            "Simulate each configured metric's sequential design, treatment against control with the metric's "
                    + "alpha shared over the treatments, under no effect and under stated effects: the false-stop "
                    + "rate, the power, how often each decision is reached, the expected information (and time) at "
                    + "stopping, and the distribution of the stopping look, each with its Monte Carlo error.",
            "Effects are treatment minus control, as drift (the effect over its standard error at the planned "
                    + "maximum: the mean of Z at the final look) or, for metrics planned with power and effect, in "
                    + "the metric's units. Without --effects: 0 and 0.5, 1 and 1.5 times the configured effect, or "
                    + "without one the drift a single look needs for 90%% power, in the direction the test watches.",
            "The same --stream gives the same numbers with any number of threads.",
        },
        footerHeading = "%nExamples:%n",
        footer = {
            "  interim simulate --config config/interim.example.yaml",
            "  interim simulate --config my.yaml --metric quote-errors --effects 1,2,3,4 --runs 200000",
            "  interim simulate --config my.yaml --looks 5 --format csv --chart oc.svg",
            "  interim simulate --demo --look-fractions 0.1,0.25,0.5,0.75,1",
        })
public final class SimulateCommand implements Callable<Integer> {
    static final int DEFAULT_LOOKS = 20;
    static final int MAX_LOOKS = 10_000;
    static final long MIN_RUNS = 100;
    static final long MAX_RUNS = 1_000_000_000L;
    static final int MAX_THREADS = 1024;

    @Spec
    CommandSpec spec;

    @Option(names = "--config", paramLabel = "FILE",
            description = "The YAML configuration whose metrics to simulate (secrets are not read).")
    Path config;

    @Option(names = "--demo", description = "Simulate the metrics of the demo scenario (interim demo) instead of --config.")
    boolean demo;

    @Option(names = "--experiment", paramLabel = "ID[,ID...]", description = "Only these experiments (default: all).")
    String experiments;

    @Option(names = "--metric", paramLabel = "NAME[,NAME...]", description = "Only these metrics (default: all).")
    String metrics;

    @Option(names = "--looks", paramLabel = "K",
            description = "K equally spaced looks up to the planned maximum (default: " + DEFAULT_LOOKS + ").")
    Integer looks;

    @Option(names = "--look-fractions", paramLabel = "T1,T2,...,1",
            description = "Information fractions of the looks instead of --looks: increasing, ending at 1. Example: 0.25,0.5,0.75,1")
    String lookFractions;

    @Option(names = "--runs", paramLabel = "N", defaultValue = "100000",
            description = "Simulated runs per metric and effect, at least " + MIN_RUNS + " (default: ${DEFAULT-VALUE}).")
    long runs;

    @Option(names = "--effects", paramLabel = "E1,E2,...",
            description = "Effects to simulate, treatment minus control, in --effect-unit; 0 (no effect) is always added.")
    String effects;

    @Option(names = "--effect-unit", paramLabel = "drift|metric",
            description = "Units of --effects: drift (default), or metric (the metric's units; needs power and effect in the configuration).")
    String effectUnit;

    @Option(names = "--threads", paramLabel = "T", description = "Worker threads (default: the available processors).")
    Integer threads;

    @Option(names = "--stream", paramLabel = "S", defaultValue = "1",
            description = "Random stream, any whole number: the same stream gives the same results (default: ${DEFAULT-VALUE}).")
    long stream;

    @Option(names = "--format", paramLabel = "table|csv|json", defaultValue = "table",
            description = "Output format (default: ${DEFAULT-VALUE}).")
    String format;

    @Option(names = "--chart", paramLabel = "FILE.svg",
            description = "Also draw the results as an SVG image: stopping looks and decisions by effect.")
    Path chart;

    @Override
    public Integer call() throws InterruptedException, IOException {
        ReportFormat output = ReportFormat.parse(format);
        double[] fractions = fractions();
        Simulation simulation = simulation();
        Path chartFile = chartFile();
        List<SimulatedComparison> comparisons = comparisons(configuration(), fractions);
        comparisons.forEach(simulation::effectsOf); // bad effects fail now, before any run

        PrintWriter err = spec.commandLine().getErr();
        ProgressBar bar = System.console() != null ? new ProgressBar(err, "simulate", "runs", System::nanoTime) : null;
        long start = System.nanoTime();
        SimulationReport report = simulation.run(comparisons, bar == null ? Progress.none() : bar::show);
        double seconds = (System.nanoTime() - start) / 1e9;
        if (bar != null) {
            bar.clear();
        }
        output.write(report, spec.commandLine().getOut());
        if (chartFile != null) {
            Files.writeString(chartFile, ReportChart.svg(report), StandardCharsets.UTF_8);
        }
        long pairs = report.comparisons().stream().mapToLong(c -> c.effects().size()).sum();
        err.println("simulate: " + pairs + " metric-effect pair" + (pairs == 1 ? "" : "s") + " x " + Numbers.count(runs)
                + " runs = " + Numbers.count(pairs * runs) + " paths in " + Numbers.fixed(seconds, 2) + " s on "
                + simulation.threads() + " thread" + (simulation.threads() == 1 ? "" : "s") + " ("
                + Numbers.count(Math.round(pairs * runs / Math.max(seconds, 1e-9))) + " paths/s)"
                + (chartFile == null ? "" : "; chart written to " + chartFile));
        err.flush();
        return Interim.OK;
    }

    private double[] fractions() {
        if (looks != null && lookFractions != null) {
            throw new IllegalArgumentException("give either --looks or --look-fractions, not both");
        }
        if (lookFractions == null) {
            int k = looks == null ? DEFAULT_LOOKS : looks;
            if (k < 1 || k > MAX_LOOKS) {
                throw new IllegalArgumentException("--looks must lie between 1 and " + MAX_LOOKS + ", got " + k);
            }
            return Fractions.equallySpaced(k);
        }
        double[] t = numbers("--look-fractions", lookFractions, "0.25,0.5,0.75,1");
        if (t.length > MAX_LOOKS) {
            throw new IllegalArgumentException("--look-fractions: at most " + MAX_LOOKS + " looks, got " + t.length);
        }
        try {
            SimulatedComparison.validate(t);
        } catch (IllegalArgumentException e) {
            throw new IllegalArgumentException("--look-fractions: " + e.getMessage(), e);
        }
        return t;
    }

    private Simulation simulation() {
        if (runs < MIN_RUNS || runs > MAX_RUNS) {
            throw new IllegalArgumentException("--runs must lie between " + MIN_RUNS + " and " + MAX_RUNS + ", got " + runs);
        }
        int t = threads == null ? Runtime.getRuntime().availableProcessors() : threads;
        if (t < 1 || t > MAX_THREADS) {
            throw new IllegalArgumentException("--threads must lie between 1 and " + MAX_THREADS + ", got " + t);
        }
        if (effectUnit != null && effects == null) {
            throw new IllegalArgumentException("--effect-unit needs --effects, the effects to simulate");
        }
        EffectUnit unit = effectUnit == null ? EffectUnit.DRIFT : EffectUnit.parse(effectUnit);
        double[] given = effects == null ? null : numbers("--effects", effects, "0.5,1,2");
        return new Simulation(runs, t, stream, given, unit);
    }

    private Path chartFile() {
        if (chart == null) {
            return null;
        }
        if (!chart.getFileName().toString().toLowerCase(Locale.ROOT).endsWith(".svg")) {
            throw new IllegalArgumentException("--chart writes an SVG image: give a file name ending in .svg, got "
                    + UserText.quoted(String.valueOf(chart)));
        }
        Path parent = chart.toAbsolutePath().getParent();
        if (parent != null && !Files.isDirectory(parent)) {
            throw new IllegalArgumentException("--chart: directory " + parent + " does not exist");
        }
        if (Files.isDirectory(chart)) {
            throw new IllegalArgumentException("--chart: " + chart + " is a directory; give a file name ending in .svg");
        }
        return chart;
    }

    private InterimConfig configuration() throws IOException {
        if (demo == (config != null)) {
            throw new IllegalArgumentException(demo ? "give either --config or --demo, not both"
                    : "give --config FILE (a YAML configuration such as config/interim.example.yaml), or --demo");
        }
        if (config != null) {
            return ConfigLoader.loadWithoutSecrets(config);
        }
        return dev.interim.demo.DemoScenario.configuration();
    }

    /** The comparisons of the selected experiments and metrics; unknown names are refused, listing the known ones. */
    private List<SimulatedComparison> comparisons(InterimConfig c, double[] fractions) {
        Set<String> knownExperiments = new LinkedHashSet<>();
        Set<String> knownMetrics = new LinkedHashSet<>();
        for (MappedExperiment e : c.experiments()) {
            knownExperiments.add(e.definition().id());
            e.definition().metrics().forEach(m -> knownMetrics.add(m.name()));
        }
        Set<String> wantedExperiments = names("--experiment", experiments, knownExperiments);
        Set<String> wantedMetrics = names("--metric", metrics, knownMetrics);
        List<SimulatedComparison> all = new ArrayList<>();
        for (MappedExperiment e : c.experiments()) {
            if (wantedExperiments == null || wantedExperiments.contains(e.definition().id())) {
                all.addAll(SimulatedComparison.of(e.definition(),
                        name -> wantedMetrics == null || wantedMetrics.contains(name), fractions));
            }
        }
        if (all.isEmpty()) {
            throw new IllegalArgumentException("no metric matches --experiment " + experiments + " and --metric " + metrics);
        }
        return all;
    }

    private static Set<String> names(String option, String text, Set<String> known) {
        if (text == null) {
            return null;
        }
        Set<String> wanted = new LinkedHashSet<>();
        for (String name : text.split(",", -1)) {
            String n = name.strip();
            if (!known.contains(n)) {
                throw new IllegalArgumentException(option + ": " + UserText.quoted(n) + " is not in the configuration; it has "
                        + String.join(", ", known));
            }
            wanted.add(n);
        }
        return wanted;
    }

    private static double[] numbers(String option, String text, String example) {
        try {
            double[] values = Arrays.stream(text.split(",", -1)).map(String::strip).mapToDouble(Double::parseDouble).toArray();
            for (double v : values) {
                if (!Double.isFinite(v)) {
                    throw new NumberFormatException();
                }
            }
            return values;
        } catch (NumberFormatException e) {
            throw new IllegalArgumentException(option + " must be numbers separated by commas, such as " + example
                    + "; got " + UserText.quoted(text));
        }
    }
}
