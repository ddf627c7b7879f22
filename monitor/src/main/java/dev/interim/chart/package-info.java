/**
 * Edge: pictures of the sequential monitoring, drawn on the server as SVG text with no library and
 * nothing fetched at run time: {@link dev.interim.chart.BoundaryChart} (the statistic of one
 * comparison over the information fraction, against its boundaries). Used by the dashboard and the
 * post-mortem report.
 */
package dev.interim.chart;
