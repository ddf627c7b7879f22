package dev.interim.config;

import java.util.Optional;

/**
 * The HTTP endpoint (metrics, JSON API, dashboard).
 *
 * @param bindAddress the address to listen on
 * @param port the port; 0 picks a free one
 * @param adminToken the token that operator actions (hold, resume) require; absent: those actions are
 *                   disabled
 */
public record HttpSettings(String bindAddress, int port, Optional<Secret> adminToken) {
}
