package dev.interim.cli;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;

/**
 * The one progress bar of {@code simulate} and {@code replay}: its text, redrawn in place with the
 * time moved by the test, and wiped at the end. Source: expected values come from what this test
 * itself writes or configures (its own ground truth); the carriage return that redraws a terminal
 * line is common practice. No statistical values here.
 */
class ProgressBarTest {

    @Test
    void withAKnownTotalTheLineShowsTheShareTheCountAndTheRate() {
        // 45,056 of 100,000 runs in 0.8 s: 45%, 10 of 24 marks, 56,320 runs/s.
        assertThat(ProgressBar.line("simulate", "runs", 0.45056, 45_056, 100_000, 0.8))
                .isEqualTo("simulate [##########..............]  45%  45,056 of 100,000 runs  56,320 runs/s");
    }

    @Test
    void withoutATotalTheLineShowsTheShareOfTheFileTheCountAndTheRate() {
        // 250,000 events in 0.5 s: 500,000 events/s; 3 of 8 bytes read: 37%, 9 of 24 marks.
        assertThat(ProgressBar.line("replay", "events", 3.0 / 8, 250_000, -1, 0.5))
                .isEqualTo("replay [#########...............]  37%  250,000 events  500,000 events/s");
    }

    @Test
    void theRateIsMeasuredOnTheClockPassedIn() {
        StringWriter text = new StringWriter();
        AtomicLong nanos = new AtomicLong(5_000_000_000L);
        ProgressBar bar = new ProgressBar(new PrintWriter(text), "simulate", "runs", nanos::get);
        nanos.addAndGet(800_000_000L);
        bar.show(45_056, 100_000);
        nanos.addAndGet(1_200_000_000L);
        bar.show(100_000, 100_000);
        assertThat(text.toString()).isEqualTo(
                "\rsimulate [##########..............]  45%  45,056 of 100,000 runs  56,320 runs/s"
                        + "\rsimulate [########################] 100%  100,000 of 100,000 runs  50,000 runs/s");
    }

    @Test
    void beforeAnyTimeHasPassedTheRateIsZero() {
        StringWriter text = new StringWriter();
        new ProgressBar(new PrintWriter(text), "replay", "events", () -> 0L).show(0.5, 10);
        assertThat(text.toString()).endsWith("  10 events  0 events/s");
    }

    @Test
    void redrawsInPlaceBlanksWhatALongerLineLeftAndWipesItselfAtTheEnd() {
        StringWriter text = new StringWriter();
        AtomicLong nanos = new AtomicLong();
        ProgressBar bar = new ProgressBar(new PrintWriter(text, true), "replay", "events", nanos::get);
        nanos.set(1_000_000_000L);
        bar.show(1.0, 1_000_000);
        String first = ProgressBar.line("replay", "events", 1.0, 1_000_000, -1, 1);
        bar.show(0.0, 10);
        String second = ProgressBar.line("replay", "events", 0.0, 10, -1, 1);
        bar.clear();

        assertThat(first).contains("100%").contains("[" + "#".repeat(24) + "]");
        assertThat(text.toString()).isEqualTo("\r" + first + "\r" + second + " ".repeat(first.length() - second.length())
                + "\r" + " ".repeat(first.length()) + "\r");   // the longest line drawn is wiped whole
        assertThat(text.toString()).doesNotContain("\n");
    }

    @Test
    void clearingWithNothingDrawnWritesNothing() {
        StringWriter text = new StringWriter();
        new ProgressBar(new PrintWriter(text, true), "simulate", "runs", () -> 0L).clear();
        assertThat(text.toString()).isEmpty();
    }
}
