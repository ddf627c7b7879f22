package dev.interim.architecture;

import static com.tngtech.archunit.lang.syntax.ArchRuleDefinition.noClasses;

import com.tngtech.archunit.core.domain.JavaClasses;
import com.tngtech.archunit.core.importer.ClassFileImporter;
import com.tngtech.archunit.core.importer.ImportOption;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The layering DEVELOPERS.md describes, kept by the build: the statistics ({@code stats},
 * {@code sequential}) know nothing of Kafka, HTTP, files, the network, serialisation or the clock;
 * every package of {@code dev.interim} is a layer whose users are written down below (the edges do
 * not import each other freely), and no two packages depend on each other in a cycle. No
 * statistical values here.
 */
// Source: the layers and permitted users written down in DEVELOPERS.md ("Layers"); the no-cycles rule is
// common practice for package structure. No statistical values here.
class LayeringTest {
    private static final String[] PURE = {"dev.interim.stats..", "dev.interim.sequential.."};
    private static JavaClasses classes;

    @BeforeAll
    static void importClasses() {
        classes = new ClassFileImporter()
                .withImportOption(ImportOption.Predefined.DO_NOT_INCLUDE_TESTS)
                .importPackages("dev.interim");
    }

    @Test
    void statisticsDoNotTouchKafkaHttpIoOrTheNetwork() {
        noClasses().that().resideInAnyPackage(PURE)
                .should().dependOnClassesThat().resideInAnyPackage(
                        "org.apache.kafka..", "java.net..", "com.sun.net.httpserver..", "javax.net..",
                        "java.io..", "java.nio..", "java.sql..", "picocli..", "com.fasterxml.jackson..",
                        "io.micrometer..", "org.eclipse.jetty..")
                .because("the statistics must stay pure: no I/O, no transport, no serialisation")
                .check(classes);
    }

    @Test
    void jettyStaysInsideTheHttpEndpoint() {
        noClasses().that().resideOutsideOfPackage("dev.interim.http..")
                .should().dependOnClassesThat().resideInAnyPackage("org.eclipse.jetty..")
                .because("routes, requests and answers are HttpEndpoint's own types: the server underneath can change")
                .check(classes);
    }

    @Test
    void statisticsDoNotReadTheClock() {
        noClasses().that().resideInAnyPackage(PURE)
                .should().dependOnClassesThat().resideInAnyPackage("java.time..")
                .orShould().callMethod(System.class, "currentTimeMillis")
                .orShould().callMethod(System.class, "nanoTime")
                .because("time is an argument: tests must be able to move it")
                .check(classes);
    }

    @Test
    void theExperimentLayerIsPureAndTakesTimeAsAnArgument() {
        noClasses().that().resideInAPackage("dev.interim.experiment..")
                .should().dependOnClassesThat().resideInAnyPackage(
                        "org.apache.kafka..", "java.net..", "com.sun.net.httpserver..", "java.io..", "java.nio.file..",
                        "picocli..", "com.fasterxml.jackson..", "io.micrometer..", "org.eclipse.jetty..", "dev.interim.cli..",
                        "dev.interim.config..")
                .orShould().callMethod(System.class, "currentTimeMillis")
                .orShould().callMethod(System.class, "nanoTime")
                .orShould().callMethod(java.time.Instant.class, "now")
                .orShould().dependOnClassesThat().areAssignableTo(java.time.Clock.class)
                .because("the decision state machine is pure; the daemon passes the time in")
                .check(classes);
    }

    /**
     * {@code text} is the lowest layer, usable from {@code stats} to the edges: number and markup
     * text from the JDK's language, math and collection classes alone.
     */
    @Test
    void theTextLayerIsPureAndBelowEverything() {
        noClasses().that().resideInAPackage("dev.interim.text..")
                .should().dependOnClassesThat().resideOutsideOfPackages("dev.interim.text..", "java.lang..", "java.math..",
                        "java.util..", "java.time..")
                .orShould().callMethod(System.class, "currentTimeMillis")
                .orShould().callMethod(System.class, "nanoTime")
                .orShould().callMethod(java.time.Instant.class, "now")
                .orShould().dependOnClassesThat().areAssignableTo(java.time.Clock.class)
                .because("every layer writes its numbers with it, so it may depend on none of them, nor on I/O or the clock (durations are values)")
                .check(classes);
    }

    /**
     * Every package and who may use it. Read a line as "this layer may only be used by these": the
     * pure core ({@code text}, {@code stats}, {@code sequential}, {@code experiment}) is used widely;
     * each edge is used only by what wires it ({@code daemon}, {@code cli}) or by the one edge built
     * on it (the dashboard on the HTTP endpoint and the charts, replay on the stream's reader).
     */
    @Test
    void everyPackageIsALayerWithItsUsersWrittenDown() {
        com.tngtech.archunit.library.Architectures.layeredArchitecture().consideringOnlyDependenciesInLayers()
                .layer("text").definedBy("dev.interim.text..")
                .layer("stats").definedBy("dev.interim.stats..")
                .layer("sequential").definedBy("dev.interim.sequential..")
                .layer("experiment").definedBy("dev.interim.experiment..")
                .layer("events").definedBy("dev.interim.events..")
                .layer("config").definedBy("dev.interim.config..")
                .layer("stream").definedBy("dev.interim.stream..")
                .layer("signal").definedBy("dev.interim.signal..")
                .layer("http").definedBy("dev.interim.http..")
                .layer("embedded").definedBy("dev.interim.embedded..")
                .layer("chart").definedBy("dev.interim.chart..")
                .layer("dashboard").definedBy("dev.interim.dashboard..")
                .layer("replay").definedBy("dev.interim.replay..")
                .layer("simulate").definedBy("dev.interim.simulate..")
                .layer("daemon").definedBy("dev.interim.daemon..")
                .layer("demo").definedBy("dev.interim.demo..")
                .layer("cli").definedBy("dev.interim.cli..")
                .whereLayer("stats").mayOnlyBeAccessedByLayers("sequential", "experiment", "config", "stream", "signal", "http",
                        "dashboard", "replay", "simulate", "cli")
                .whereLayer("sequential").mayOnlyBeAccessedByLayers("experiment", "config", "stream", "signal", "chart",
                        "replay", "simulate", "demo", "cli")
                .whereLayer("experiment").mayOnlyBeAccessedByLayers("events", "config", "stream", "signal", "http", "chart",
                        "dashboard", "replay", "simulate", "daemon", "demo", "cli")
                .whereLayer("events").mayOnlyBeAccessedByLayers("config", "stream", "replay", "daemon", "cli")
                .whereLayer("config").mayOnlyBeAccessedByLayers("daemon", "demo", "cli")
                .whereLayer("stream").mayOnlyBeAccessedByLayers("replay", "daemon")
                .whereLayer("signal").mayOnlyBeAccessedByLayers("http", "daemon", "demo", "cli")
                .whereLayer("http").mayOnlyBeAccessedByLayers("dashboard", "daemon")
                .whereLayer("embedded").mayOnlyBeAccessedByLayers("daemon")
                .whereLayer("chart").mayOnlyBeAccessedByLayers("dashboard")
                .whereLayer("dashboard").mayOnlyBeAccessedByLayers("daemon", "cli")
                .whereLayer("replay").mayOnlyBeAccessedByLayers("cli")
                .whereLayer("simulate").mayOnlyBeAccessedByLayers("cli")
                .whereLayer("daemon").mayOnlyBeAccessedByLayers("demo", "cli")
                .whereLayer("demo").mayOnlyBeAccessedByLayers("cli")
                .whereLayer("cli").mayNotBeAccessedByAnyLayer()
                .check(classes);
    }

    /** The dashboard and the report are dated by the clock they are given, so tests move time instead of sleeping. */
    @Test
    void theDashboardAndTheTallyStageTakeTheirClock() {
        noClasses().that().resideInAPackage("dev.interim.dashboard..")
                .or().haveFullyQualifiedName("dev.interim.stream.TallyStage")
                .should().callMethod(System.class, "currentTimeMillis")
                .orShould().callMethod(System.class, "nanoTime")
                .orShould().callMethod(java.time.Instant.class, "now")
                .orShould().callMethod(java.time.Clock.class, "systemUTC")
                .orShould().callMethod(java.time.Clock.class, "systemDefaultZone")
                .because("time is passed in, as the judge's clock is")
                .check(classes);
    }

    /** The tally holds the sums; the changelog's records are UnitRecords' and StateCodec's business. */
    @Test
    void theTallyKnowsNothingOfItsChangelogsEncoding() {
        noClasses().that().haveFullyQualifiedName("dev.interim.stream.PartitionState")
                .should().dependOnClassesThat().haveFullyQualifiedName("dev.interim.stream.StateCodec")
                .orShould().dependOnClassesThat().haveFullyQualifiedName("dev.interim.stream.StateCodec$UnitEncoder")
                .check(classes);
        noClasses().that().haveFullyQualifiedName("dev.interim.stream.StateCodec")
                .should().dependOnClassesThat().haveFullyQualifiedName("dev.interim.stream.PartitionState")
                .check(classes);
    }

    @Test
    void noPackagesDependOnEachOtherInACycle() {
        com.tngtech.archunit.library.dependencies.SlicesRuleDefinition.slices().matching("dev.interim.(*)..")
                .should().beFreeOfCycles()
                .check(classes);
    }

    @Test
    void layersDependOnlyOnTheOnesBeforeThem() {
        noClasses().that().resideInAPackage("dev.interim.stats..")
                .should().dependOnClassesThat().resideInAnyPackage("dev.interim.sequential..", "dev.interim.experiment..",
                        "dev.interim.cli..")
                .check(classes);
        noClasses().that().resideInAPackage("dev.interim.sequential..")
                .should().dependOnClassesThat().resideInAnyPackage("dev.interim.experiment..", "dev.interim.cli..")
                .check(classes);
    }
}
