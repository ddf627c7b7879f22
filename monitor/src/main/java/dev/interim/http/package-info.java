/**
 * Edge: the daemon's HTTP server ({@link dev.interim.http.HttpEndpoint}) on the JDK's built-in
 * server: {@code /metrics} and {@code /health} now, the JSON API and operator actions as further
 * routes.
 */
package dev.interim.http;
