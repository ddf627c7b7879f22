package dev.interim.simulate;

import static org.assertj.core.api.Assertions.assertThat;

import java.io.PrintWriter;
import java.io.StringWriter;
import java.util.concurrent.atomic.AtomicLong;
import org.junit.jupiter.api.Test;

/** The progress bar redraws one line in place, with the time moved by the test. No statistical values here. */
// Source: expected values come from what this test itself writes or configures (its own ground truth);
// no published statistical values are checked here.
class ProgressBarTest {

    @Test
    void theBarRedrawsOneLineAndEndsItWhenFinished() {
        StringWriter text = new StringWriter();
        AtomicLong nanos = new AtomicLong(5_000_000_000L);
        ProgressBar bar = new ProgressBar(new PrintWriter(text), nanos::get);
        nanos.addAndGet(800_000_000L);
        bar.update(45_056, 100_000);
        nanos.addAndGet(1_000_000_000L);
        bar.update(100_000, 100_000);
        bar.finish();
        assertThat(text.toString()).isEqualTo(
                "\rsimulate [#############.................]  45%  45,056 of 100,000 runs  0.8 s"
                        + "\rsimulate [##############################] 100%  100,000 of 100,000 runs  1.8 s"
                        + System.lineSeparator());
    }

    @Test
    void aShorterLineBlanksWhatTheLongerOneLeft() {
        StringWriter text = new StringWriter();
        ProgressBar bar = new ProgressBar(new PrintWriter(text), () -> 0L);
        bar.update(999_999, 1_000_000);
        bar.update(0, 1_000_000);
        String[] redraws = text.toString().split("\r");
        assertThat(redraws[2]).hasSameSizeAs(redraws[1]).endsWith(" ");
    }
}
