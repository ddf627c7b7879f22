package dev.interim.config;

import java.util.List;
import java.util.Optional;

/**
 * The HTTP endpoint (metrics, JSON API, dashboard).
 *
 * @param bindAddress the address to listen on
 * @param port the port; 0 picks a free one
 * @param adminToken the token that operator actions (hold, resume) require; absent: those actions are
 *                   disabled
 * @param allowedHosts host names answered besides IP addresses, {@code localhost}, the bind address
 *                     and (bound to every interface) the machine's own names, against DNS rebinding;
 *                     {@code *} answers any; empty by default
 */
public record HttpSettings(String bindAddress, int port, Optional<Secret> adminToken, List<String> allowedHosts) {
    public HttpSettings {
        allowedHosts = List.copyOf(allowedHosts);
    }
}
