package dev.interim.replay;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import java.io.IOException;
import java.io.InputStream;
import java.io.OutputStream;
import java.net.URISyntaxException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.zip.GZIPOutputStream;

/** The test resources of the replay: the Mossglint configuration and its files of events. */
final class Scenario {
    private Scenario() {}

    static Path resource(String name) {
        try {
            return Path.of(Scenario.class.getResource("/dev/interim/replay/" + name).toURI());
        } catch (URISyntaxException | NullPointerException e) {
            throw new AssertionError("test resource dev/interim/replay/" + name + " is missing", e);
        }
    }

    static Path config() {
        return resource("mossglint.yaml");
    }

    static InterimConfig loaded() {
        return ConfigLoader.loadWithoutSecrets(config());
    }

    /** The invented rollout: 2,660 events of which none is bad. */
    static Path events() {
        return resource("mossglint.ndjson");
    }

    /** A copy of {@code source} compressed with gzip into {@code target}. */
    static Path gzip(Path source, Path target) throws IOException {
        try (InputStream in = Files.newInputStream(source);
             OutputStream out = new GZIPOutputStream(Files.newOutputStream(target))) {
            in.transferTo(out);
        }
        return target;
    }

    /** The Mossglint configuration with {@code from} replaced by {@code to}, written into {@code dir}. */
    static Path configWith(Path dir, String from, String to) throws IOException {
        String yaml = Files.readString(config());
        if (!yaml.contains(from)) {
            throw new AssertionError("mossglint.yaml has no '" + from + "'");
        }
        return Files.writeString(dir.resolve("mossglint-changed.yaml"), yaml.replace(from, to));
    }
}
