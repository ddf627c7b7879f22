package dev.interim.demo;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import java.io.IOException;
import java.io.InputStream;
import java.io.UncheckedIOException;
import java.nio.charset.StandardCharsets;

/** The demo scenario's configuration, for the commands that read it without running the demo (simulate, replay). */
public final class DemoScenario {
    static final String RESOURCE = "/dev/interim/demo/demo.yaml";

    private DemoScenario() {}

    /** The scenario's YAML with its placeholders filled by the running demo. */
    static String yaml(int httpPort, String webhookUrl) {
        try (InputStream in = DemoScenario.class.getResourceAsStream(RESOURCE)) {
            if (in == null) {
                throw new IllegalStateException("the demo scenario " + RESOURCE + " is missing from the jar");
            }
            return new String(in.readAllBytes(), StandardCharsets.UTF_8)
                    .replace("${DEMO_HTTP_PORT}", Integer.toString(httpPort))
                    .replace("${DEMO_WEBHOOK_URL}", webhookUrl);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** The scenario's configuration without its secrets: experiments, metrics and event mapping only. */
    public static InterimConfig configuration() {
        return ConfigLoader.parseWithoutSecrets(yaml(0, "http://127.0.0.1:9/unused"));
    }
}
