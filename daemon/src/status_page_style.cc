#include "status_page_parts.h"

namespace codedrift::status_page {

// Plain and high contrast. Colours come from the Okabe-Ito set (distinguishable with the
// common colour-vision deficiencies), and every colour is backed by a second cue: state names
// are written out, card borders differ in weight and dash, chart lines differ in dash and
// width, the two drift bars differ in fill (solid vs hatched).
std::string_view Style() {
  return R"css(
:root {
  --ink: #111; --paper: #fff; --muted: #444; --rule: #767676; --wash: #f3f3f3;
  --blue: #0072b2; --orange: #e69f00; --vermillion: #d55e00; --stale: #a84a00;
  font-family: system-ui, "DejaVu Sans", "Liberation Sans", Arial, sans-serif;
  color: var(--ink); background: var(--paper); line-height: 1.4;
}
* { box-sizing: border-box; }
body { margin: 0 auto; padding: 12px 16px 32px; max-width: 1400px; }
a { color: #004f7c; }
a:focus-visible { outline: 3px solid var(--ink); outline-offset: 2px; }
.top { display: flex; flex-wrap: wrap; align-items: baseline; gap: 4px 16px;
       border-bottom: 2px solid var(--ink); padding-bottom: 6px; margin-bottom: 14px; }
.top h1 { font-size: 1.35rem; margin: 0; letter-spacing: .02em; }
.top h1 span { font-weight: normal; color: var(--muted); }
#status-line { margin: 0; color: var(--muted); font-size: .9rem; }
#status-line.error { color: var(--ink); font-weight: bold; background: #ffe0cc;
                     border: 2px solid var(--stale); padding: 2px 8px; }
#cards { display: grid; gap: 16px;
         grid-template-columns: repeat(auto-fill, minmax(min(100%, 600px), 1fr)); }
.empty { color: var(--muted); }
.card { border: 1px solid var(--rule); border-left-width: 6px; padding: 10px 14px 12px;
        min-width: 0; background: var(--paper); }
.card[data-state="fit"] { border-left-color: var(--blue); }
.card[data-state="drifting"] { border-left: 6px dashed var(--orange); }
.card[data-state="stale"] { border: 3px solid var(--stale); border-left-width: 10px; }
.card-head { display: flex; flex-wrap: wrap; align-items: center; gap: 4px 12px; }
.card-head h2 { font-size: 1.15rem; margin: 0; overflow-wrap: anywhere; }
.badge { display: inline-block; padding: 1px 10px; font-weight: bold; font-size: .9rem;
         text-transform: uppercase; letter-spacing: .06em; border: 2px solid var(--ink); }
.badge[data-value="fit"] { background: var(--blue); color: #fff; border-color: var(--blue); }
.badge[data-value="drifting"] { background: var(--orange); color: #000; }
.badge[data-value="stale"] { background: var(--stale); color: #fff; border-color: var(--ink); }
.since { color: var(--muted); font-size: .85rem; }
.meta { margin: 2px 0 0; color: var(--muted); font-size: .85rem; overflow-wrap: anywhere; }
.reason { margin: 8px 0; padding: 6px 10px; background: var(--wash);
          border-left: 4px solid var(--rule); overflow-wrap: anywhere; }
.card[data-state="stale"] .reason { border-left-color: var(--stale); font-weight: 600; }
.figures { display: grid; grid-template-columns: repeat(auto-fill, minmax(150px, 1fr));
           gap: 8px 14px; margin: 10px 0; }
.figures div { min-width: 0; }
.figures dt { font-size: .8rem; color: var(--muted); }
.figures dd { margin: 0; font-size: 1.05rem; font-weight: 600;
              font-variant-numeric: tabular-nums; overflow-wrap: anywhere; }
.figures dd small { font-weight: normal; font-size: .78rem; color: var(--muted);
                    white-space: nowrap; }
.figures dd.none { color: var(--muted); font-weight: normal; }
.figures .note-line { display: block; font-weight: normal; font-size: .75rem; color: var(--muted); }
.chart { margin: 12px 0 0; }
.chart h3 { font-size: .95rem; margin: 0 0 4px; }
.chart svg { display: block; width: 100%; height: auto; overflow: visible; }
.chart svg text { font-size: 11px; fill: var(--ink); font-family: inherit; }
.chart .axis line, .chart .axis path { stroke: var(--rule); }
.chart .grid { stroke: #d9d9d9; }
.legend { display: flex; flex-wrap: wrap; gap: 4px 16px; font-size: .8rem; margin: 4px 0 0;
          padding: 0; list-style: none; }
.legend li { display: flex; align-items: center; gap: 6px; }
.legend svg { width: 28px; height: 12px; flex: none; }
.note { font-size: .8rem; color: var(--muted); margin: 4px 0 0; }
.proposal { margin: 12px 0 0; }
.proposal a { font-weight: bold; }
.warnings { margin: 8px 0 0; padding-left: 18px; font-size: .85rem; }
footer { margin-top: 24px; padding-top: 8px; border-top: 1px solid var(--rule);
         color: var(--muted); font-size: .85rem; }
@media (max-width: 480px) {
  body { padding: 8px 8px 24px; }
  .card { padding: 8px 10px 10px; }
  .figures { grid-template-columns: 1fr 1fr; gap: 6px 10px; }
  .figures dd { font-size: 1rem; }
}
)css";
}

}  // namespace codedrift::status_page
