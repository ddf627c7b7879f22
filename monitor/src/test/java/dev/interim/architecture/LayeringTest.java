package dev.interim.architecture;

import static com.tngtech.archunit.lang.syntax.ArchRuleDefinition.noClasses;

import com.tngtech.archunit.core.domain.JavaClasses;
import com.tngtech.archunit.core.importer.ClassFileImporter;
import com.tngtech.archunit.core.importer.ImportOption;
import org.junit.jupiter.api.BeforeAll;
import org.junit.jupiter.api.Test;

/**
 * The layering of DESIGN.md, kept by the build: the statistics ({@code stats}, {@code sequential})
 * know nothing of Kafka, HTTP, files, the network, serialisation or the clock, and each layer
 * depends only on the ones before it. Source: the layering of the shared design notes (DESIGN.md,
 * "Shape"); no statistical values here.
 */
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
                        "java.util..")
                .orShould().callMethod(System.class, "currentTimeMillis")
                .orShould().callMethod(System.class, "nanoTime")
                .because("every layer writes its numbers with it, so it may depend on none of them, nor on I/O or the clock")
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
