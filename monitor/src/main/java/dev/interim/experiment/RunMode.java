package dev.interim.experiment;

/** Whether an experiment's decisions act: live, or in dry-run mode (decided and recorded, never acted on). */
public enum RunMode {
    /** Decisions act: a stop for harm with the kill action calls the kill webhook. */
    LIVE,
    /** Decisions are made and recorded, but nothing acts on them (no kill webhook). */
    DRY_RUN;

    /** The mode of the configuration's {@code dry_run: true|false}. */
    public static RunMode dryRun(boolean dryRun) {
        return dryRun ? DRY_RUN : LIVE;
    }
}
