package dev.interim.dashboard;

/**
 * The style sheet of the dashboard and the report, placed inline in each page (no file to fetch).
 * A calm paper-and-slate palette with one teal accent; decisions carry a glyph and words besides
 * their colour, and a stop for harm also a hatched bar and capitals, so they read in grey too.
 */
final class Style {
    private Style() {}

    /**
     * The Content-Security-Policy of the pages: nothing from elsewhere; inline style always, inline
     * script only where {@code script} is true, and requests back to the same origin only.
     */
    static String contentSecurityPolicy(boolean script) {
        return "default-src 'none'; style-src 'unsafe-inline'; img-src data:; base-uri 'none'; form-action 'none'; "
                + (script ? "script-src 'unsafe-inline'; connect-src 'self'" : "script-src 'none'; connect-src 'none'");
    }

    static final String CSS = """
            :root {
              --paper: #f3f1ec; --card: #ffffff; --ink: #22303a; --muted: #5d6b73; --rule: #d9d5cc;
              --accent: #15616d; --harm: #a4492b; --harm-tint: #f7e8e1; --benefit: #3d7a4f; --benefit-tint: #e6f1e8;
              --futility: #6f6a8f; --held: #7d5f0c; --held-tint: #faf1d6; --band: #1f2e37;
            }
            * { box-sizing: border-box; }
            html { background: var(--paper); color: var(--ink); }
            body { margin: 0; font: 15px/1.45 system-ui, -apple-system, "Segoe UI", Roboto, "DejaVu Sans", sans-serif; }
            .band { background: var(--band); color: #f3f1ec; padding: 14px 28px; display: flex; flex-wrap: wrap;
                    align-items: baseline; gap: 6px 24px; }
            .band h1 { margin: 0; font-size: 20px; font-weight: 650; letter-spacing: .01em; }
            .band .what { color: #b9c6cb; }
            .band .refresh { margin-left: auto; font-size: 13px; color: #cfd9dc; }
            .band .refresh.stale { color: #ffd98a; font-weight: 600; }
            main, .page { max-width: 1340px; margin: 0 auto; padding: 18px 28px 40px; }
            h2 { font-size: 19px; margin: 0; overflow-wrap: anywhere; }
            h3 { font-size: 16px; margin: 22px 0 8px; }
            h4 { font-size: 15px; margin: 0; overflow-wrap: anywhere; }
            .overview { margin: 4px 0 14px; color: var(--muted); }
            .experiment { background: var(--card); border: 1px solid var(--rule); border-radius: 6px; margin: 0 0 22px;
                          padding: 16px 20px 20px; }
            .experiment > header { display: flex; flex-wrap: wrap; gap: 8px 14px; align-items: center; }
            .flag { display: inline-block; font-size: 12.5px; padding: 1px 8px; border-radius: 3px; border: 1px solid var(--rule);
                    color: var(--muted); background: #faf9f6; }
            .flag.live { border-color: var(--ink); color: var(--ink); font-weight: 600; }
            .flag.held { border: 2px solid var(--held); color: var(--held); background: var(--held-tint); font-weight: 700; }
            .flag.mismatch { border: 2px solid var(--held); color: var(--held); background: var(--held-tint); font-weight: 700; }
            .facts { display: grid; grid-template-columns: max-content 1fr; gap: 3px 14px; margin: 12px 0 4px; font-size: 14px; }
            .facts dt { color: var(--muted); }
            .facts dd { margin: 0; font-variant-numeric: tabular-nums; }
            .arms { border-collapse: collapse; font-size: 14px; font-variant-numeric: tabular-nums; }
            .arms th, .arms td { padding: 1px 14px 1px 0; text-align: right; }
            .arms th:first-child, .arms td:first-child { text-align: left; }
            .alert { margin: 12px 0 0; padding: 8px 12px; border-left: 8px solid var(--harm); background: var(--harm-tint);
                     color: #6e2a15; font-weight: 650; }
            .held-note { margin: 12px 0 0; padding: 8px 12px; border-left: 8px solid var(--held); background: var(--held-tint);
                         color: #5a4306; font-weight: 600; }
            .cards { display: grid; grid-template-columns: repeat(auto-fill, minmax(min(610px, 100%), 1fr)); gap: 16px; margin-top: 14px; }
            .comparison { border: 1px solid var(--rule); border-radius: 5px; padding: 12px 12px 10px; background: #fdfcfa; min-width: 0; }
            .comparison > header { display: flex; justify-content: space-between; align-items: center; gap: 10px; margin-bottom: 2px; }
            .comparison .meta { margin: 0 0 6px; font-size: 13px; color: var(--muted); }
            .comparison.decision-stop-harm { border: 2px solid var(--harm); border-left-width: 12px; background: #fffaf7; }
            .comparison.decision-stop-harm > header { margin: -12px -12px 8px; padding: 9px 12px;
              background: repeating-linear-gradient(135deg, var(--harm-tint) 0 9px, #f1d9cd 9px 18px); }
            .comparison.decision-held { border: 2px dashed var(--held); }
            .comparison svg { display: block; width: 100%; max-width: 600px; height: auto; margin: 0 auto; }
            .numbers { display: grid; grid-template-columns: repeat(3, minmax(0, 1fr)); gap: 6px 12px; margin: 6px 4px 0; font-size: 13.5px; }
            .numbers div { min-width: 0; }
            .numbers dt { color: var(--muted); font-size: 12px; }
            .numbers dd { margin: 0; font-variant-numeric: tabular-nums; overflow-wrap: anywhere; }
            .numbers .wide { grid-column: 1 / -1; }
            .numbers .line { display: inline-block; margin-right: 1.4em; }
            .badge { display: inline-block; white-space: nowrap; font-size: 13px; padding: 2px 9px; border-radius: 3px;
                     border: 1px solid var(--rule); color: var(--ink); background: #ffffff; }
            .badge-stop-harm { background: var(--harm); border-color: var(--harm); color: #ffffff; font-weight: 800; letter-spacing: .04em; }
            .badge-stop-benefit { background: var(--benefit-tint); border-color: var(--benefit); color: #234a2f; font-weight: 650; }
            .badge-stop-futility { border-color: var(--futility); color: #4a4566; font-weight: 600; }
            .badge-complete { border-color: var(--ink); font-weight: 600; }
            .badge-held { background: var(--held-tint); border: 2px solid var(--held); color: #5a4306; font-weight: 700; }
            .badge-continue { color: var(--accent); border-color: #a9c9cd; }
            .empty { padding: 30px; text-align: center; color: var(--muted); background: var(--card); border: 1px dashed var(--rule); }
            .guide { color: var(--muted); font-size: 13.5px; max-width: 980px; }
            .guide p { margin: 6px 0; }
            table.history, table.summary, table.design { border-collapse: collapse; font-size: 13.5px; font-variant-numeric: tabular-nums;
                     margin: 6px 0 10px; }
            table.history th, table.history td, table.summary th, table.summary td, table.design th, table.design td {
                     border-bottom: 1px solid #e7e3db; padding: 3px 10px; text-align: right; vertical-align: top; }
            table.history th, table.summary th, table.design th { color: var(--muted); font-weight: 600; background: #f7f5f1; }
            table.summary td:nth-child(-n+2), table.summary th:nth-child(-n+2),
            table.design td:nth-child(-n+2), table.design th:nth-child(-n+2) { text-align: left; }
            table.design td { text-align: left; }
            tr.changed td { background: #f4f1e8; font-weight: 600; }
            .scroll { overflow-x: auto; }
            footer.page-foot { color: var(--muted); font-size: 12.5px; border-top: 1px solid var(--rule); margin-top: 24px; padding-top: 8px; }
            @media print { .band { background: none; color: var(--ink); border-bottom: 2px solid var(--ink); }
                           .band .what { color: var(--muted); } .experiment, .comparison { break-inside: avoid; } }
            """;
}
