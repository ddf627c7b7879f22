/**
 * The lowest layer: how numbers and markup are written as text, in one place.
 * {@link dev.interim.text.Numbers} writes every number the project shows or exports (machine text
 * for CSV and JSON, human text for tables, charts, the dashboard, replay and the report);
 * {@link dev.interim.text.Markup} escapes text for HTML and SVG.
 *
 * <p>Pure: no I/O, no clock, no other package of the project. Every layer may use it, from
 * {@code stats} and {@code sequential} to the edges.
 */
package dev.interim.text;
