package dev.interim.stream;

import java.util.Map;
import java.util.Set;

/**
 * A unit's state by name, as the units changelog carries it: its arm, the unit-rate metrics it met,
 * and its unit-total totals (an absent one is 0). The collections are handed over, not copied:
 * whoever makes one does not change them afterwards.
 */
record UnitState(String arm, Set<String> met, Map<String, Double> totals) {}
