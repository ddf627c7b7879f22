package dev.interim.config;

import java.util.Collection;
import java.util.Optional;

/** Suggests the accepted key a misspelt one was probably meant to be (edit distance at most 2). */
final class KeyHints {
    private KeyHints() {}

    static Optional<String> closest(String key, Collection<String> accepted) {
        String best = null;
        int bestDistance = Integer.MAX_VALUE;
        for (String candidate : accepted) {
            if (Math.abs(key.length() - candidate.length()) > 2) {
                continue; // more than two edits apart, whatever the letters (and a huge key costs nothing)
            }
            int d = distance(key.toLowerCase(java.util.Locale.ROOT), candidate);
            if (d < bestDistance) {
                best = candidate;
                bestDistance = d;
            }
        }
        int allowed = Math.min(2, Math.max(1, key.length() / 4));
        return bestDistance <= allowed ? Optional.of(best) : Optional.empty();
    }

    /**
     * Edit distance counting insertions, deletions, substitutions and swaps of neighbours as one edit
     * each (the optimal string alignment distance), with '-' and '_' the same character.
     */
    static int distance(String a, String b) {
        int[][] d = new int[a.length() + 1][b.length() + 1];
        for (int i = 0; i <= a.length(); i++) {
            d[i][0] = i;
        }
        for (int j = 0; j <= b.length(); j++) {
            d[0][j] = j;
        }
        for (int i = 1; i <= a.length(); i++) {
            for (int j = 1; j <= b.length(); j++) {
                int cost = same(a.charAt(i - 1), b.charAt(j - 1)) ? 0 : 1;
                d[i][j] = Math.min(Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1), d[i - 1][j - 1] + cost);
                if (i > 1 && j > 1 && same(a.charAt(i - 1), b.charAt(j - 2)) && same(a.charAt(i - 2), b.charAt(j - 1))) {
                    d[i][j] = Math.min(d[i][j], d[i - 2][j - 2] + 1);
                }
            }
        }
        return d[a.length()][b.length()];
    }

    private static boolean same(char x, char y) {
        return x == y || (x == '-' || x == '_') && (y == '-' || y == '_');
    }
}
