/** The report's own stylesheet, inlined: neutral greys, one accent, system fonts only (no downloads). */
export const REPORT_CSS = `
body{font:14px/1.45 system-ui,-apple-system,"Segoe UI",sans-serif;color:#222;margin:0;background:#fafaf8}
main{max-width:900px;margin:0 auto;padding:16px 20px 40px}
h1{font-size:22px;margin:8px 0 4px}h2{font-size:18px;margin:28px 0 8px;border-bottom:1px solid #ccc;padding-bottom:3px}
h3{font-size:15px;margin:20px 0 4px}
.notice{border:2px solid #555;background:#fff;padding:8px 14px;margin:10px 0}
.notice p{margin:4px 0}.meta{color:#555}
table{border-collapse:collapse;margin:6px 0;font-size:13px}th,td{border:1px solid #ccc;padding:3px 7px;text-align:left}
th{background:#eee}td.n{text-align:right;font-variant-numeric:tabular-nums}
svg.chart{display:block;margin:4px 0 10px;background:#fff;max-width:100%;height:auto}
table.alarms{table-layout:fixed;width:100%;overflow-wrap:anywhere}table.alarms td,table.alarms th{padding:3px 4px}
svg .plot{fill:#fff;stroke:#999}svg .grid{stroke:#e4e4e4}svg .limit{stroke:#a33;stroke-dasharray:3 2}
p.warning{border-left:4px solid #7a2e2e;padding-left:8px;font-weight:600}
svg .band{opacity:.55}svg .gap{fill:#bbb;opacity:.45}svg .series{fill:none;stroke-width:1.2}
svg text{font:11px system-ui,sans-serif;fill:#333}svg .chart-title{font-weight:600}svg .chart-note{fill:#7a2e2e}svg .gap-label,svg .empty{fill:#666}
svg .bin{fill:#7d97b8}svg .sn-curve{fill:none;stroke:#a33;stroke-width:1.6}ul.assumptions{margin:4px 0;font-size:13px}
table.fatigue,table.fatigue-differences{table-layout:fixed;width:100%;overflow-wrap:anywhere}table.fatigue td,table.fatigue th{padding:3px 4px}
svg .band-label{fill:#822}svg .span-level{font-size:10px}svg .off-scale{font-weight:600}
`;
