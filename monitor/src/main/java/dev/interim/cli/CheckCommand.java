package dev.interim.cli;

import dev.interim.config.ConfigLoader;
import dev.interim.text.Durations;
import dev.interim.events.MappedExperiment;
import dev.interim.config.InterimConfig;
import dev.interim.config.KafkaSettings;
import dev.interim.events.MetricSource;
import dev.interim.experiment.Assignment;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.Horizon;
import dev.interim.experiment.MetricDefinition;
import dev.interim.stats.HistogramCounts;
import dev.interim.stats.QuantileSignificance;
import dev.interim.text.Numbers;
import java.io.PrintWriter;
import java.nio.file.Path;
import java.util.ArrayList;
import java.util.List;
import java.util.Locale;
import java.util.Map;
import java.util.concurrent.Callable;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/**
 * {@code interim check}: reads and validates a configuration without starting anything, and prints
 * what it understood: per experiment how arms were assigned, per metric its design and where it is
 * read (with caps, and both fields of a ratio). An invalid file is bad input: a line per problem
 * naming the file, the key, the value and the rule (every problem of the file, those of the values
 * before those of the secrets), and exit code 2 (see {@link UserErrorHandler}). A valid file
 * that is likely a slip gets a {@code WARN:} line under its experiment and still exits 0: events
 * that carry a unit while an experiment's arms are assigned per event.
 */
@Command(name = "check",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        sortOptions = false,
        description = {
            "Validate a configuration file without starting anything, and summarise it: the Kafka topics, "
                    + "the experiments, their arms and the design of each metric.",
            "The environment variables that hold secrets are read and checked as the daemon would, "
                    + "unless --without-secrets is given.",
        },
        footerHeading = "%nExamples:%n",
        footer = {
            "  interim check --config config/interim.example.yaml",
            "  interim check --config deploy/interim.yaml --without-secrets",
        })
public final class CheckCommand implements Callable<Integer> {
    private final Map<String, String> environment;

    @Spec
    CommandSpec spec;

    @Option(names = "--config", paramLabel = "FILE", required = true,
            description = "The YAML configuration to check (reference: docs/configuration.md).")
    Path config;

    @Option(names = "--without-secrets",
            description = "Do not read the environment variables that hold secrets (for CI, where they are "
                    + "absent); everything else is checked.")
    boolean withoutSecrets;

    public CheckCommand() {
        this(System.getenv());
    }

    /** A check that reads secrets from {@code environment} (tests). */
    CheckCommand(Map<String, String> environment) {
        this.environment = environment;
    }

    @Override
    public Integer call() {
        InterimConfig c = withoutSecrets ? ConfigLoader.loadWithoutSecrets(config) : ConfigLoader.load(config, environment);
        PrintWriter out = spec.commandLine().getOut();
        out.println(config + ": valid" + (withoutSecrets ? " (secrets not read)" : ""));
        out.println("  kafka:   " + kafka(c.kafka()));
        out.println("  http:    " + c.http().bindAddress() + ":" + c.http().port()
                + c.http().adminToken().map(t -> ", admin token from $" + t.variable()).orElse(", no admin token"));
        out.println("  webhook: " + c.webhook().map(w -> w.url() + ", signed with the key in $" + w.signingKey().variable()
                + ", " + w.maxAttempts() + " attempts").orElse("none"));
        for (MappedExperiment e : c.experiments()) {
            experiment(out, e, c.events().unit().isPresent());
        }
        out.flush();
        return Interim.OK;
    }

    private static String kafka(KafkaSettings k) {
        return (k.embedded() ? "embedded broker" : String.join(",", k.bootstrapServers()))
                + (k.properties().isEmpty() ? "" : " (" + k.properties().names().size() + " client properties)")
                + "; input " + String.join(", ", k.inputTopics()) + (k.inputKeyedByUnit() ? " (keyed by unit)" : "")
                + "; decisions " + k.decisionsTopic() + "; dead letters " + k.deadLetterTopic();
    }

    /** The warning for an experiment assigned per event while events carry a unit (valid, but often a slip). */
    static final String PER_EVENT_WITH_UNITS = "events carry a unit but arms are assigned per event: if units keep their "
            + "arm, set assignment: unit";
    /** Below this, a look leans on a normal approximation a few skewed values do not support (common practice: 30). */
    static final long FEW_PER_ARM = 30;

    private static void experiment(PrintWriter out, MappedExperiment config, boolean unitMapped) {
        ExperimentDefinition e = config.definition();
        double total = e.split().values().stream().mapToDouble(Double::doubleValue).sum();
        List<String> arms = new ArrayList<>();
        for (String arm : e.arms()) {
            String share = Numbers.rounded(100 * e.split().get(arm) / total, 1).toPlainString() + "%";
            arms.add(arm + (arm.equals(e.control()) ? " (control, " + share + ")" : " (" + share + ")"));
        }
        out.println();
        out.println("experiment " + e.id() + (e.dryRun() ? " [dry run: no kill webhook calls]" : " [LIVE: kill actions call the webhook]"));
        out.println("  arms: " + String.join(", ", arms));
        out.println("  assignment: " + (e.assignment() == Assignment.UNIT
                ? "per unit (each unit keeps its arm: event metrics are analysed as ratios of per-unit sums)"
                : "per event (each event is assigned on its own: events are independent observations)"));
        if (e.assignment() == Assignment.EVENT && unitMapped) {
            out.println("  WARN: " + PER_EVENT_WITH_UNITS);
        }
        if (e.minPerArm() < FEW_PER_ARM) {
            out.println("  WARN: min_per_arm " + e.minPerArm() + " lets looks run on fewer than " + FEW_PER_ARM
                    + " observations per arm, where the normal approximation behind every boundary does not hold for"
                    + " skewed values; the measured error rates in the README use 100");
        }
        out.println("  looks every " + Durations.format(e.lookEvery()) + " once every arm has " + e.minPerArm()
                + "; sample ratio mismatch holds decisions below p = " + Numbers.plain(e.sampleRatioThreshold()));
        List<String[]> rows = new ArrayList<>();
        rows.add(new String[] {"metric", "kind", "role", "worse", "alpha/comparison", "sides", "spending", "horizon",
            "on harm", "source"});
        for (MetricDefinition m : e.metrics()) {
            rows.add(new String[] {
                m.name(), kind(m), lower(m.role()), lower(m.worse()),
                Numbers.plain(e.comparisonAlpha(m)) + (e.treatments().size() > 1 ? " (" + Numbers.plain(m.alpha())
                        + "/" + e.treatments().size() + ")" : ""),
                String.valueOf(m.sides().count()),
                SpendingNames.describe(m.spending()) + (m.futility() == null ? "" : ", futility "
                        + SpendingNames.describe(m.futility())),
                horizon(m) + (m.baseline() == null ? "" : ", vs baseline " + Numbers.plain(m.baseline())),
                lower(m.action()),
                source(config.source(m), m),
            });
        }
        printLeftAligned(out, rows, "  ");
        for (MetricDefinition m : e.metrics()) {
            if (m.quantile() == null) {
                continue;
            }
            long needed = MetricDefinition.quantileEventsNeeded(m.quantile());
            out.println("  " + m.label() + ": no look before each arm has " + Numbers.count(needed) + " events ("
                    + QuantileSignificance.MIN_TAIL + " values beyond the quantile)"
                    + (e.assignment() == Assignment.UNIT ? " and events of " + QuantileSignificance.MIN_GROUPS
                            + " of its " + HistogramCounts.UNIT_GROUPS + " groups of units" : ""));
            if (m.horizon() instanceof Horizon.MaxPerArm max && max.perArm() < needed) {
                out.println("  WARN: " + m.label() + ": max_per_arm " + max.perArm() + " events is below the " + Numbers.count(needed)
                        + " each arm needs before the quantile is estimated: the horizon comes before the first look; raise"
                        + " max_per_arm or choose a quantile nearer the middle");
            }
        }
    }

    /** The kind, with a quantile's probability: {@code event-quantile p99 (0.99)}. */
    private static String kind(MetricDefinition m) {
        return m.quantile() == null ? m.kind().label()
                : m.kind().label() + " " + Numbers.percentile(m.quantile()) + " (" + Numbers.plain(m.quantile()) + ")";
    }

    private static String horizon(MetricDefinition m) {
        Horizon h = m.horizon();
        if (h instanceof Horizon.MaxPerArm max) {
            return "at most " + max.perArm() + (m.quantile() != null ? " events" : "") + " per arm";
        }
        Horizon.Powered p = (Horizon.Powered) h;
        String effect = p.scale() == Horizon.Scale.RELATIVE
                ? "relative effect " + (p.effect() > 0 ? "+" : "") + Numbers.plain(100 * p.effect()) + "%"
                : "effect " + Numbers.plain(p.effect());
        return "power " + Numbers.plain(p.power()) + " for " + effect + ", " + p.plannedLooks() + " planned looks";
    }

    /**
     * Where the metric is read, with its caps: {@code /quote/elapsed_ms capped at 5000}; a ratio as
     * {@code numerator /order/revenue capped at 500, denominator /order/sessions}.
     */
    private static String source(MetricSource s, MetricDefinition m) {
        if (s instanceof MetricSource.Counted counted) {
            return counted.field() + " " + counted.countsIf();
        }
        if (s instanceof MetricSource.Ratio ratio) {
            return "numerator " + ratio.field() + capped(m.cap()) + ", denominator " + ratio.denominator()
                    + capped(m.denominatorCap());
        }
        return s.field().toString() + capped(m.cap());
    }

    private static String capped(Double cap) {
        return cap == null ? "" : " capped at " + Numbers.plain(cap);
    }

    private static String lower(Enum<?> e) {
        return e.name().toLowerCase(Locale.ROOT);
    }

    private static void printLeftAligned(PrintWriter out, List<String[]> rows, String indent) {
        int[] widths = new int[rows.get(0).length];
        for (String[] row : rows) {
            for (int c = 0; c < row.length; c++) {
                widths[c] = Math.max(widths[c], row[c].length());
            }
        }
        for (String[] row : rows) {
            StringBuilder line = new StringBuilder(indent);
            for (int c = 0; c < row.length; c++) {
                line.append(row[c]).append(c == row.length - 1 ? "" : " ".repeat(widths[c] - row[c].length() + 2));
            }
            out.println(line.toString().stripTrailing());
        }
    }
}
