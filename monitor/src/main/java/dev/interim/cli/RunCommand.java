package dev.interim.cli;

import dev.interim.config.ConfigLoader;
import dev.interim.config.InterimConfig;
import dev.interim.daemon.Daemon;
import java.nio.file.Files;
import java.nio.file.Path;
import java.util.concurrent.Callable;
import java.util.concurrent.CompletableFuture;
import picocli.CommandLine.Command;
import picocli.CommandLine.Model.CommandSpec;
import picocli.CommandLine.Option;
import picocli.CommandLine.Spec;

/** {@code interim run --config FILE}: the monitor daemon, until stopped (SIGTERM or Ctrl-C). */
@Command(name = "run",
        mixinStandardHelpOptions = true,
        version = Interim.VERSION,
        description = {
            "Run the monitor daemon: read the experiments' events from Kafka, look on each experiment's schedule, "
                    + "and publish decisions (decisions topic, /metrics, kill webhooks, logs).",
            "With no kafka.bootstrap_servers in the configuration it starts an embedded single-node Kafka broker, "
                    + "keeping its data in --data-dir. Stops cleanly on SIGTERM or Ctrl-C.",
        })
public final class RunCommand implements Callable<Integer> {
    @Spec
    CommandSpec spec;

    @Option(names = "--config", paramLabel = "FILE", required = true, description = "The configuration file (YAML).")
    Path config;

    @Option(names = "--data-dir", paramLabel = "DIR", defaultValue = "interim-data",
            description = "Data of the embedded broker, when there is one (default: ${DEFAULT-VALUE}).")
    Path dataDir;

    @Override
    public Integer call() throws Exception {
        if (!Files.isRegularFile(config)) {
            throw new IllegalArgumentException("no configuration file at " + config + "; see config/interim.example.yaml");
        }
        InterimConfig loaded = ConfigLoader.load(config);
        CompletableFuture<Void> stopped = new CompletableFuture<>();
        Daemon daemon = Daemon.start(loaded, new Daemon.Options(dataDir, null, null));
        Thread hook = new Thread(() -> {
            daemon.close();
            stopped.complete(null);
        }, "interim-shutdown");
        Runtime.getRuntime().addShutdownHook(hook);
        spec.commandLine().getErr().println("interim: running; metrics at http://" + loaded.http().bindAddress() + ":"
                + daemon.httpPort() + "/metrics (Ctrl-C to stop)");
        spec.commandLine().getErr().flush();
        CompletableFuture.anyOf(stopped, daemon.failure()).join();
        if (!stopped.isDone()) {
            // The daemon cannot go on (another daemon took its instance id, a stage stopped): stop it
            // and exit with the reason, so that a supervisor sees the failure.
            try {
                Runtime.getRuntime().removeShutdownHook(hook);
            } catch (IllegalStateException shuttingDown) {
                stopped.join();
                return Interim.OK;
            }
            daemon.close();
            throw daemon.failure().join();
        }
        return Interim.OK;
    }
}
