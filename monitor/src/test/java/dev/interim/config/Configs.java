package dev.interim.config;

import static org.assertj.core.api.Assertions.assertThat;

import java.nio.file.Files;
import java.nio.file.Path;
import java.util.Map;

/** A small valid configuration to vary, its environment, and the shipped example. */
final class Configs {
    private Configs() {}

    /** base64 of 32 bytes: a well-formed signing key (Standard Webhooks form, with its prefix). */
    static final String HOOK_KEY = "whsec_c2VjcmV0LWtleS1mb3ItdGVzdHMtb25seS0xMjM0NTY=";
    static final Map<String, String> ENV = Map.of("HOOK_KEY", HOOK_KEY);

    static final String VALID = """
            kafka:
              input_topics: [shop.events]
              input_keyed_by_unit: true
            events:
              experiment: /exp
              arm: /arm
              unit: /user
            webhook:
              url: https://hooks.example/kill
              signing_key_env: HOOK_KEY
            experiments:
              - id: basket-v3
                control: old
                treatments: [new-a, new-b]
                metrics:
                  - name: errors
                    kind: event-rate
                    role: guardrail
                    worse: higher
                    field: /status
                    counts_if: {at_least: 500}
                    max_per_arm: 10000
                    action: kill
                  - name: bought
                    kind: unit-rate
                    role: primary
                    worse: lower
                    field: /step
                    counts_if: {equals: paid}
                    power: 0.8
                    effect: 0.01
            """;

    /** {@link #VALID} with each (old, new) pair replaced; fails if an old text is not there exactly once. */
    static String valid(String... replacements) {
        String yaml = VALID;
        for (int i = 0; i < replacements.length; i += 2) {
            String old = replacements[i];
            int at = yaml.indexOf(old);
            assertThat(at).as("'%s' occurs in the base configuration", old).isNotNegative();
            assertThat(yaml.indexOf(old, at + 1)).as("'%s' occurs once", old).isNegative();
            yaml = yaml.replace(old, replacements[i + 1]);
        }
        return yaml;
    }

    /** config/interim.example.yaml, found from the working directory or a parent. */
    static Path example() {
        for (Path dir = Path.of("").toAbsolutePath(); dir != null; dir = dir.getParent()) {
            Path candidate = dir.resolve("config/interim.example.yaml");
            if (Files.isRegularFile(candidate)) {
                return candidate;
            }
        }
        throw new AssertionError("config/interim.example.yaml not found above " + Path.of("").toAbsolutePath());
    }

    /** The environment the example needs (its two secrets). */
    static Map<String, String> exampleEnvironment() {
        return Map.of("INTERIM_WEBHOOK_KEY", HOOK_KEY, "INTERIM_ADMIN_TOKEN", "token-for-tests-0123456789abcdef");
    }
}
