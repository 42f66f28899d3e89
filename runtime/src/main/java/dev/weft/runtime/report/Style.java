package dev.weft.runtime.report;

/** The report's style sheet, inline in the document; no fonts or images from elsewhere. */
final class Style {

    private Style() {
    }

    static final String CSS = """

            body { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif; color: #111;
                   background: #fff; margin: 1.5em auto; max-width: 1000px; padding: 0 1em; line-height: 1.4; }
            h1 { font-size: 1.7em; margin: 0 0 0.4em; }
            h2 { font-size: 1.35em; margin: 1.6em 0 0.5em; border-bottom: 2px solid #111; padding-bottom: 0.15em; }
            h3 { font-size: 1.1em; margin: 1.3em 0 0.4em; }
            .verdict { font-size: 1.25em; padding: 0.45em 0.7em; margin: 0.4em 0 0.8em; }
            .verdict.small { font-size: 1.05em; }
            .verdict-word { font-size: 1.3em; letter-spacing: 0.06em; }
            .verdict-pass { border: 3px solid #006b4f; background: #e3f4ec; }
            .verdict-fail { border: 5px double #8c2d04; background: #fbe4d8; }
            .caution { border: 2px solid #111; border-left: 12px solid #111; background: #fff8d6;
                       padding: 0.5em 0.9em; margin: 0 0 1em; }
            .caution-head { font-weight: bold; margin: 0.2em 0; }
            .caution ul { margin: 0.3em 0 0.3em 1.2em; padding: 0; }
            table { border-collapse: collapse; margin: 0.5em 0 1em; font-size: 0.92em; }
            caption { text-align: left; font-weight: bold; padding: 0.2em 0; white-space: nowrap; }
            th, td { border: 1px solid #999; padding: 0.2em 0.5em; vertical-align: top; }
            thead th { background: #eee; text-align: left; }
            tbody th { text-align: left; font-weight: normal; background: #f6f6f6; }
            td.num { text-align: right; font-variant-numeric: tabular-nums; }
            td.field { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 0.9em; color: #444; }
            td.result { font-weight: bold; }
            td.result-fail { background: #fbe4d8; text-decoration: underline; }
            table.facts th { width: 14em; }
            figure { margin: 0.6em 0 1.4em; }
            figcaption { font-size: 0.9em; color: #333; margin-top: 0.2em; }
            svg.figure { display: block; max-width: 100%; height: auto; }
            svg text { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; font-size: 11px; fill: #111; }
            svg text.lane-none { fill: #777; font-style: italic; }
            svg text.off-scale { fill: #444; font-style: italic; }
            svg text.stop-label { font-weight: bold; }
            svg text.on-dark { fill: #fff; font-weight: bold; }
            svg text.axis-title { font-size: 11.5px; }
            nav.contents { font-size: 0.9em; margin: 0.3em 0 0.6em; }
            .explain { font-size: 0.92em; color: #333; }
            footer { margin-top: 2em; font-size: 0.85em; color: #555; border-top: 1px solid #bbb; }
            @media print {
              body { margin: 0; max-width: none; font-size: 10pt; }
              * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
              a { color: #111; text-decoration: none; }
              nav.contents { display: none; }
              section.episode { break-before: page; }
              header.opening + section.episode { break-before: auto; }
              figure, table, .caution, .verdict, h2, h3 { break-inside: avoid; }
              h2, h3 { break-after: avoid; }
              svg.figure { width: 100%; }
            }
            """;
}
