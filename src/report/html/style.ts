/** The page's own look: calm paper tones, one accent, generous spacing; a plain print style (no cards, no contents line). */
export const CSS = `
:root { --ink: #1d2126; --muted: #5b6168; --rule: #dcdad3; --paper: #fbfaf7; --card: #ffffff; --accent: #0c4c80; --warn-bg: #fff6e6; --warn: #a45a00; }
* { box-sizing: border-box; }
html { background: var(--paper); }
body { margin: 0 auto; max-width: 1180px; padding: 32px 40px 64px; color: var(--ink); font: 15px/1.55 "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; }
h1 { font-size: 30px; line-height: 1.2; margin: 4px 0 8px; letter-spacing: -0.01em; }
h2 { font-size: 19px; margin: 0 0 10px; padding-bottom: 6px; border-bottom: 2px solid var(--accent); display: inline-block; }
code { font: 12.5px/1.4 "DejaVu Sans Mono", Consolas, monospace; background: #f0eee8; padding: 1px 4px; border-radius: 3px; }
code.hash { word-break: break-all; }
.top { padding: 8px 0 16px; }
.contents { display: flex; flex-wrap: wrap; gap: 4px 18px; padding: 10px 0 12px; margin-bottom: 22px; border-top: 1px solid var(--rule); border-bottom: 1px solid var(--rule); font-size: 13.5px; }
.contents a { color: var(--accent); text-decoration: none; }
.contents a:hover { text-decoration: underline; }
.kicker { text-transform: uppercase; letter-spacing: 0.08em; font-size: 12px; color: var(--accent); margin: 0; font-weight: bold; }
.lede { font-size: 17px; color: var(--muted); margin: 0 0 6px; }
.meta { color: var(--muted); font-size: 13px; margin: 0; }
section { background: var(--card); border: 1px solid var(--rule); border-radius: 6px; padding: 20px 24px; margin: 0 0 22px; }
.pair { display: grid; grid-template-columns: 1fr 1fr; gap: 22px; align-items: stretch; }
.pair > section { margin-bottom: 22px; }
@media (max-width: 860px) { .pair { grid-template-columns: 1fr; } body { padding: 20px; } }
.how { color: var(--muted); margin: 0 0 14px; max-width: 78ch; }
.headline { display: flex; gap: 18px; align-items: center; margin: 4px 0 14px; }
.big { font-size: 52px; font-weight: bold; color: var(--accent); line-height: 1; }
.big-text { max-width: 52ch; }
.muted, .ci { color: var(--muted); }
.ci { font-size: 12.5px; white-space: nowrap; }
.verdicts { list-style: none; padding: 0; margin: 0; }
.verdicts li { padding: 7px 0 7px 22px; border-top: 1px solid #eeece6; position: relative; }
.verdicts li::before { content: ""; position: absolute; left: 4px; top: 14px; width: 9px; height: 9px; border-radius: 50%; }
.tone-good::before { background: #009e73; }
.tone-doubt::before { background: #e69f00; }
.tone-bad::before { background: #d55e00; }
#cautions { background: var(--warn-bg); border-color: #f0d29b; border-left: 5px solid var(--warn); }
#cautions h2 { border-bottom-color: var(--warn); }
#cautions ul { margin: 0; padding-left: 18px; }
#cautions li { margin-bottom: 7px; }
.figs { display: flex; flex-wrap: wrap; gap: 18px 28px; align-items: flex-start; }
.fig { margin: 0; max-width: 100%; }
#fit-predictive .fig { max-width: calc(50% - 14px); }
@media (max-width: 860px) { #fit-predictive .fig { max-width: 100%; } }
.fit-warnings { font-size: 15px; }
.table-wrap + .figs { margin-top: 22px; }
.fig .svg svg { max-width: 100%; height: auto; display: block; }
.fig figcaption { font-size: 13px; color: var(--muted); margin-top: 6px; min-width: 280px; }
.table-wrap { overflow-x: auto; margin-top: 14px; }
table.data { border-collapse: collapse; font-size: 13.5px; }
table.data caption { caption-side: top; text-align: left; color: var(--muted); font-size: 13px; padding-bottom: 6px; max-width: 78ch; }
table.data th, table.data td { padding: 5px 12px 5px 0; text-align: left; border-bottom: 1px solid #eeece6; vertical-align: top; }
table.data thead th { border-bottom: 1px solid var(--ink); font-weight: bold; }
table.data th[scope=rowgroup] { font-weight: normal; }
table.data tr.group > * { border-top: 1px solid #c9c6bd; }
table.data td .num, table.data th .num { font-variant-numeric: tabular-nums; }
.methods { border-left: 3px solid var(--accent); padding: 2px 0 2px 16px; max-width: 82ch; }
.methods p { margin: 0 0 10px; }
.note { color: var(--warn); }
.separation { background: #fbeee6; border-left: 4px solid #d55e00; padding: 8px 12px; margin: 0 0 12px; }
ul.ties { margin: 0; padding-left: 18px; font-size: 14px; }
footer { color: var(--muted); font-size: 12.5px; margin-top: 8px; }
@media print { .contents { display: none; } html { background: #fff; } body { max-width: none; padding: 0; } section { break-inside: avoid; border: none; padding: 8px 0; } .pair { grid-template-columns: 1fr 1fr; } }
`;
