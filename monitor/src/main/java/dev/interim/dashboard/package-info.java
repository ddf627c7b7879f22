/**
 * Edge: the pages people read. {@link dev.interim.dashboard.Dashboard} serves {@code GET /dashboard},
 * a self-refreshing page of every experiment this instance decides, with a boundary chart per arm ×
 * metric; {@link dev.interim.dashboard.Report} writes the self-contained post-mortem report of one
 * experiment; {@link dev.interim.dashboard.DaemonClient} reads an experiment back from a running
 * daemon's JSON API. Everything is rendered on the server, escaped, and served or written with its
 * style inline: nothing is fetched from elsewhere.
 */
package dev.interim.dashboard;
