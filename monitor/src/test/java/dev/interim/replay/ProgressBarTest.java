package dev.interim.replay;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.PrintWriter;
import java.io.StringWriter;
import org.junit.jupiter.api.Test;

/** The progress line: its text, redrawn in place, and wiped at the end. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ProgressBarTest {
    @Test
    void theLineShowsTheShareOfTheFileTheEventsAndTheRate() {
        // 250,000 events in 0.5 s: 500,000 events/s; 3 of 8 bytes read: 37%, 9 of 24 marks.
        ReplayListener.Progress p = new ReplayListener.Progress(250_000, 3, 8, 500_000_000L, false);
        assertThat(ProgressBar.line(p)).isEqualTo("replay [#########...............]  37%  250,000 events  500,000 events/s");
    }

    @Test
    void redrawsInPlaceAndWipesItselfAtTheEnd() {
        StringWriter text = new StringWriter();
        ProgressBar bar = new ProgressBar(new PrintWriter(text, true));
        bar.show(new ReplayListener.Progress(1_000_000, 8, 8, 1_000_000_000L, false));
        String first = ProgressBar.line(new ReplayListener.Progress(1_000_000, 8, 8, 1_000_000_000L, false));
        bar.show(new ReplayListener.Progress(10, 0, 8, 1_000_000_000L, false));
        String second = ProgressBar.line(new ReplayListener.Progress(10, 0, 8, 1_000_000_000L, false));
        bar.show(new ReplayListener.Progress(10, 8, 8, 1_000_000_000L, true));

        assertThat(first).contains("100%").contains("[" + "#".repeat(24) + "]");
        assertThat(text.toString()).isEqualTo("\r" + first + "\r" + second + " ".repeat(first.length() - second.length())
                + "\r" + " ".repeat(first.length()) + "\r");   // the longest line drawn is wiped whole
        assertThat(text.toString()).doesNotContain("\n");
    }

    @Test
    void clearingWithNothingDrawnWritesNothing() {
        StringWriter text = new StringWriter();
        new ProgressBar(new PrintWriter(text, true)).clear();
        assertThat(text.toString()).isEmpty();
    }
}
