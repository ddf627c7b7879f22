package dev.interim.experiment;

import dev.interim.text.UserText;

/** What happens beyond the decision record when an arm is stopped for harm on this metric. */
public enum StopAction {
    /** Record and meter only. */
    NONE,
    /** Call the kill webhook (never in dry-run). */
    KILL,
    /** Raise the paging signal (a meter that alerting rules watch). */
    PAGE;

    public static StopAction parse(String text) {
        return switch (text == null ? "" : text) {
            case "none" -> NONE;
            case "kill" -> KILL;
            case "page" -> PAGE;
            default -> throw new IllegalArgumentException("unknown action " + UserText.quoted(text) + ": use none, kill or page");
        };
    }
}
