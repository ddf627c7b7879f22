package dev.interim.signal;

import dev.interim.experiment.Comparison;
import dev.interim.experiment.Decision;
import dev.interim.experiment.DecisionRecord;
import dev.interim.experiment.ExperimentDefinition;
import dev.interim.experiment.ExperimentMonitor;
import dev.interim.experiment.LookReport;
import dev.interim.experiment.LookResult;
import dev.interim.experiment.MetricDefinition;
import dev.interim.experiment.StopAction;
import dev.interim.experiment.Tally;
import io.micrometer.core.instrument.Counter;
import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.Meter;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.Tags;
import io.micrometer.core.instrument.Timer;
import io.micrometer.prometheusmetrics.PrometheusConfig;
import io.micrometer.prometheusmetrics.PrometheusMeterRegistry;
import java.time.Duration;
import java.util.List;
import java.util.Map;
import java.util.concurrent.ConcurrentHashMap;
import java.util.function.BooleanSupplier;
import java.util.function.ToDoubleFunction;
import java.util.regex.Pattern;

/**
 * The daemon's meters, scraped in the Prometheus text format (every meter is listed in
 * docs/metrics.md). Names are ours, under the prefix {@code interim_}.
 *
 * <p>Gauges read the owned {@link ExperimentMonitor}s at scrape time, so they always show the
 * state of the last look without being pushed. They hold what they read strongly: Micrometer's gauges
 * hold weakly by default and would report NaN once nothing else referred to the object.
 *
 * <p>Values Prometheus gets where the statistics have none: before a comparison's first look its
 * estimate, interval, statistic, boundaries and information fraction are {@code NaN} and its α spent
 * is 0; an absent boundary is {@code +Inf} (upper) or {@code -Inf} (lower), as is the boundary of a
 * look that has no α to spend yet; one-sided intervals have one infinite end. The text format
 * writes these as {@code NaN}, {@code +Inf} and {@code -Inf}; comparisons in PromQL treat NaN as
 * never equal, greater or less.
 *
 * <p>Ownership: with several daemons sharing the work, each experiment is decided by one of them,
 * and ownership moves when they start, stop or crash. Every configured experiment keeps its series
 * on every instance ({@link #expect}); while this instance does not decide it, {@code interim_owned}
 * is 0 and the gauges that describe its state (decision, statistics, paging, held, sample ratio,
 * observations) are NaN: "not known here", never a stale value that another instance may already
 * have changed. PromQL's {@code max} and {@code sum} skip NaN beside a number, so
 * {@code max by (experiment) (interim_paging)} over all instances is the owner's value. Counters
 * and {@code interim_dry_run} (from the configuration) keep their values. {@code interim_assigned}
 * says whether this instance holds its share of the work at all (its consumer group assignment).
 *
 * <p>Reading a monitor from the scrape thread while the judge thread looks is a benign race: each
 * gauge reads one immutable look result or one enum, so a scrape may be one look behind, never
 * inconsistent within a value. Thread-safe otherwise.
 */
public final class Meters {
    /** Label values of {@code reason}: a small fixed vocabulary, never free text (series are forever). */
    private static final Pattern REASON = Pattern.compile("[a-z0-9_.-]{1,64}");

    private final PrometheusMeterRegistry registry;
    /** experiment → its slot: the monitor while this instance decides it, else none. */
    private final Map<String, Slot> slots = new ConcurrentHashMap<>();
    private final Map<List<String>, Observations> observations = new ConcurrentHashMap<>();
    private volatile BooleanSupplier assigned = () -> false;

    /** Where the gauges of one experiment read: the monitor while owned, null while not. */
    private static final class Slot {
        final ExperimentDefinition definition;
        volatile ExperimentMonitor monitor;
        /** "metric\u001farm" → the comparison of the owned monitor. */
        final Map<String, ComparisonSlot> comparisons = new ConcurrentHashMap<>();

        Slot(ExperimentDefinition definition) {
            this.definition = definition;
        }
    }

    private static final class ComparisonSlot {
        volatile Comparison comparison;
    }

    /** The observation count of one arm on one metric at the last look; NaN while not owned. */
    private static final class Observations {
        volatile double value = Double.NaN;
    }

    public Meters() {
        this(new PrometheusMeterRegistry(PrometheusConfig.DEFAULT));
    }

    /** Meters on a registry of the caller's (which may carry JVM and process meters as well). */
    public Meters(PrometheusMeterRegistry registry) {
        this.registry = registry;
        Gauge.builder("interim.assigned", this, m -> m.assigned.getAsBoolean() ? 1 : 0)
                .description("1 while this instance holds its share of the work (its consumer group assignment, "
                        + "even an empty one), 0 while it connects, joins the group or rebalances")
                .strongReference(true).register(registry);
    }

    /** Where {@code interim_assigned} reads whether this instance holds its consumer group assignment. */
    public void assignment(BooleanSupplier holdsAssignment) {
        this.assigned = java.util.Objects.requireNonNull(holdsAssignment, "holdsAssignment");
    }

    public MeterRegistry registry() {
        return registry;
    }

    /** Everything, in the Prometheus text format 0.0.4. */
    public String scrape() {
        return registry.scrape();
    }

    /**
     * Registers the series of a configured experiment, not (yet) decided here: {@code interim_owned}
     * 0, its state gauges NaN, its counters at 0. Does nothing when it is registered already.
     */
    public void expect(ExperimentDefinition definition) {
        String experiment = definition.id();
        if (slots.containsKey(experiment)) {
            return;
        }
        Slot slot = new Slot(definition);
        slots.put(experiment, slot);
        Tags tags = Tags.of("experiment", experiment);
        gauge("interim.owned", "1 while this instance decides the experiment, 0 while another instance does or nobody yet",
                tags, slot, x -> x.monitor == null ? 0 : 1);
        gauge("interim.sample.ratio.p.value", "p-value of the sample-ratio check at the last look (1 while too few exposures)",
                tags, slot, x -> owned(x, m -> m.sampleRatio().pValue()));
        gauge("interim.sample.ratio.mismatch", "1 while the exposures contradict the configured split, else 0",
                tags, slot, x -> owned(x, m -> m.sampleRatio().mismatch() ? 1 : 0));
        gauge("interim.held", "1 while automated decisions are held (sample-ratio mismatch or operator hold), else 0",
                tags, slot, x -> owned(x, m -> m.held() ? 1 : 0));
        gauge("interim.dry.run", "1 when the experiment runs in dry-run mode (no kill webhook), else 0",
                tags, slot, x -> x.definition.dryRun() ? 1 : 0);
        gauge("interim.paging", "1 while a comparison whose action is page or kill is stopped for harm, else 0",
                tags, slot, x -> owned(x, Meters::paging));
        // Created at zero so that "no events for N minutes" is an increase of 0, not an absent series.
        acceptedCounter(experiment);
        lookCounter(experiment);
        // The comparisons an ExperimentMonitor makes of it (each metric × each treatment), without
        // making one: a powered metric's design is planned when its comparison is built, which costs
        // a tenth of a second or more at start-up, before the HTTP endpoint is up.
        for (MetricDefinition metric : definition.metrics()) {
            for (String arm : definition.treatments()) {
                ComparisonSlot cs = new ComparisonSlot();
                slot.comparisons.put(metric.name() + '\u001f' + arm, cs);
                registerComparison(experiment, metric, arm, cs);
            }
        }
    }

    /**
     * This instance decides the experiment now, with this monitor: its gauges read it. Registers the
     * experiment first when it was not expected; counters keep their values.
     */
    public void own(ExperimentMonitor monitor) {
        expect(monitor.definition());
        Slot slot = slots.get(monitor.definition().id());
        for (Comparison c : monitor.comparisons()) {
            ComparisonSlot cs = slot.comparisons.get(c.metric().name() + '\u001f' + c.arm());
            if (cs != null) {
                cs.comparison = c;
            }
        }
        slot.monitor = monitor;
    }

    /**
     * This instance no longer decides the experiment (another one does, or nobody yet): its series
     * stay, {@code interim_owned} 0 and its state gauges NaN.
     */
    public void disown(String experiment) {
        Slot slot = slots.get(experiment);
        if (slot != null) {
            slot.monitor = null;
            slot.comparisons.values().forEach(cs -> cs.comparison = null);
        }
        observations.forEach((k, v) -> {
            if (k.get(0).equals(experiment)) {
                v.value = Double.NaN;
            }
        });
    }

    /**
     * Registers the gauges of one experiment and of each of its comparisons, owned by this instance.
     * Registering an experiment id again (a restart with a new monitor) replaces the old series,
     * counters included.
     */
    public void register(ExperimentMonitor monitor) {
        String experiment = monitor.definition().id();
        if (slots.containsKey(experiment)) {
            remove(experiment);
        }
        own(monitor);
    }

    /** Removes every meter of an experiment (no longer configured). */
    public void remove(String experiment) {
        slots.remove(experiment);
        observations.keySet().removeIf(k -> k.get(0).equals(experiment));
        for (Meter m : registry.getMeters()) {
            if (experiment.equals(m.getId().getTag("experiment"))) {
                registry.remove(m);
            }
        }
    }

    /** {@code n} events of {@code experiment} read and tallied. */
    public void eventsAccepted(String experiment, long n) {
        acceptedCounter(experiment).increment(n);
    }

    /**
     * One event that could not be used, by reason: a short fixed token such as {@code not-json},
     * {@code missing-field}, {@code unknown-experiment}.
     *
     * @throws IllegalArgumentException for a reason that is not such a token (free text would create a
     *     series per message)
     */
    public void eventRejected(String reason) {
        if (reason == null || !REASON.matcher(reason).matches()) {
            throw new IllegalArgumentException("a rejection reason must be 1 to 64 of a-z 0-9 _ . - (a fixed token, not a message), got '"
                    + reason + "'");
        }
        Counter.builder("interim.events.rejected").description("Events that could not be used, by reason (each also a dead letter)")
                .tag("reason", reason).register(registry).increment();
    }

    /**
     * One look of an experiment: counts it, times it, and takes the observation counts of every arm
     * from the tallies the look was given.
     *
     * @param tallies metric name → arm → tally, as passed to {@link ExperimentMonitor#look}
     * @param took how long the look took, measured by the caller
     */
    public void looked(LookReport report, Map<String, Map<String, Tally>> tallies, Duration took) {
        String experiment = report.experiment();
        lookCounter(experiment).increment();
        Timer.builder("interim.look.duration").description("Time taken by one look of an experiment, all comparisons included")
                .tag("experiment", experiment).register(registry).record(took);
        tallies.forEach((metric, byArm) -> byArm.forEach((arm, tally) ->
                observationGauge(experiment, arm, metric).value = tally.count()));
    }

    /** One decision record published (a look's state change, a hold or a resume). */
    public void decided(DecisionRecord record) {
        Counter.builder("interim.decisions").description("Decision records published, by decision")
                .tags("experiment", record.experiment(), "decision", record.decision())
                .register(registry).increment();
    }

    /** One call of the webhook sender, by outcome. */
    public void webhook(DeliveryResult result) {
        Counter.builder("interim.webhook.deliveries").description("Kill webhook calls, by outcome")
                .tag("outcome", result.outcome().label()).register(registry).increment();
    }

    private void registerComparison(String experiment, MetricDefinition metric, String arm, ComparisonSlot slot) {
        Tags tags = Tags.of("experiment", experiment, "arm", arm, "metric", metric.name(),
                "role", metric.role().name().toLowerCase(), "action", metric.action().name().toLowerCase());
        gauge("interim.estimate", "Effect estimate at the last look: treatment minus control (or baseline), in the metric's units",
                tags, slot, x -> last(x, r -> r.estimate().effect()));
        gauge("interim.interval.lower", "Lower end of the repeated confidence interval of the effect",
                tags, slot, x -> last(x, r -> r.interval().lower()));
        gauge("interim.interval.upper", "Upper end of the repeated confidence interval of the effect",
                tags, slot, x -> last(x, r -> r.interval().upper()));
        gauge("interim.statistic", "Test statistic at the last look, on the standard normal scale",
                tags, slot, x -> last(x, r -> r.estimate().z()));
        gauge("interim.boundary", "Boundary at the last look on the standard normal scale, by side",
                tags.and("side", "upper"), slot, x -> last(x, r -> r.look().upper()));
        gauge("interim.boundary", "Boundary at the last look on the standard normal scale, by side",
                tags.and("side", "lower"), slot, x -> last(x, r -> r.look().lower()));
        gauge("interim.alpha.spent", "Type I error spent so far by the comparison's boundaries",
                tags, slot, x -> compared(x, k -> k.last() == null ? 0 : k.last().look().alphaSpent()));
        gauge("interim.information.fraction", "Information fraction of the last look (1 = planned maximum)",
                tags, slot, x -> last(x, r -> r.look().fraction()));
        gauge("interim.decision", "Decision state: 0 continue, 1 stop-harm, 2 stop-benefit, 3 stop-futility, 4 complete, 5 held",
                tags, slot, x -> compared(x, k -> k.decision().code()));
        gauge("interim.last.look", "Number of the comparison's last look (0 before the first)",
                tags, slot, x -> compared(x, k -> k.last() == null ? 0 : k.last().look().number()));
    }

    private Observations observationGauge(String experiment, String arm, String metric) {
        return observations.computeIfAbsent(List.of(experiment, arm, metric), k -> {
            Observations value = new Observations();
            gauge("interim.observations", "Observations (events or units) of one arm on one metric at the last look",
                    Tags.of("experiment", experiment, "arm", arm, "metric", metric), value, o -> o.value);
            return value;
        });
    }

    private Counter acceptedCounter(String experiment) {
        return Counter.builder("interim.events.accepted").description("Events read and tallied")
                .tag("experiment", experiment).register(registry);
    }

    private Counter lookCounter(String experiment) {
        return Counter.builder("interim.looks").description("Looks taken at an experiment")
                .tag("experiment", experiment).register(registry);
    }

    private <T> void gauge(String name, String description, Tags tags, T source, ToDoubleFunction<T> value) {
        Gauge.builder(name, source, value).description(description).tags(tags).strongReference(true).register(registry);
    }

    /** NaN while not owned here. */
    private static double owned(Slot slot, ToDoubleFunction<ExperimentMonitor> value) {
        ExperimentMonitor m = slot.monitor;
        return m == null ? Double.NaN : value.applyAsDouble(m);
    }

    /** NaN while not owned here. */
    private static double compared(ComparisonSlot slot, ToDoubleFunction<Comparison> value) {
        Comparison c = slot.comparison;
        return c == null ? Double.NaN : value.applyAsDouble(c);
    }

    /** NaN while not owned here, and before the comparison's first look. */
    private static double last(ComparisonSlot slot, ToDoubleFunction<LookResult> value) {
        return compared(slot, c -> {
            LookResult r = c.last();
            return r == null ? Double.NaN : value.applyAsDouble(r);
        });
    }

    static double paging(ExperimentMonitor monitor) {
        if (monitor.acknowledged()) {
            return 0;
        }
        for (Comparison c : monitor.comparisons()) {
            StopAction action = c.metric().action();
            if (c.decision() == Decision.STOP_HARM && (action == StopAction.PAGE || action == StopAction.KILL)) {
                return 1;
            }
        }
        return 0;
    }
}
