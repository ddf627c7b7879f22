/**
 * Edge: the daemon's HTTP server ({@link dev.interim.http.HttpEndpoint}) on embedded Jetty (core API, no
 * servlets): {@code /metrics} and {@code /health}, the JSON API, operator actions and the dashboard as
 * further routes.
 */
package dev.interim.http;
