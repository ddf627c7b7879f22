/**
 * The lowest layer: how numbers and markup are written as text, in one place.
 * {@link dev.interim.text.Numbers} writes every number the project shows or exports (machine text
 * for CSV and JSON, human text for tables, charts, the dashboard, replay and the report);
 * {@link dev.interim.text.Markup} escapes text for HTML and SVG.
 *
 * <p>Pure: no I/O, no clock, no other package of the project. Every layer may use it, from
 * {@code stats} and {@code sequential} to the edges.
 *
 * <p>Text from outside in messages: {@link dev.interim.text.UserText} quotes a value a user wrote
 * (a configuration value, a key, a command-line argument) so that a message stays one readable line,
 * whatever the value holds. Depends on nothing else of interim, so every layer may use it.
 */
package dev.interim.text;
