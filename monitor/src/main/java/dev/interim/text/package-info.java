/**
 * Text from outside in messages: {@link dev.interim.text.UserText} quotes a value a user wrote
 * (a configuration value, a key, a command-line argument) so that a message stays one readable line,
 * whatever the value holds. Depends on nothing else of interim, so every layer may use it.
 */
package dev.interim.text;
