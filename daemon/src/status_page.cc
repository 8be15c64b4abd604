#include "status_page.h"

#include <string>

#include "status_page_parts.h"

namespace codedrift {

// The page is assembled once from its parts: one HTML document with the style and script
// inline, so it works on an air-gapped host (no fonts, scripts or stylesheets fetched).
// Everything it shows comes from the JSON API, which it polls.
std::string_view StatusPageHtml() {
  static const std::string page = [] {
    std::string html = R"html(<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>codedrift status</title>
<link rel="icon" href="data:,">
<style>)html";
    html += status_page::Style();
    html += R"html(</style>
</head>
<body>
<header class="top">
<h1>codedrift <span>code drift status</span></h1>
<p id="status-line" role="status">Loading figures from the daemon&hellip;</p>
</header>
<main id="cards" data-generation="0" aria-live="polite"></main>
<footer>
<p>Figures come from <a href="/api/v1/models">/api/v1/models</a>; metrics are at
<a href="/metrics">/metrics</a>. Saving is measured out of sample: a code trained on the older
half of the window, priced on the newer half. A proposed table only works when encoder and
decoder switch together: keep the old decoder until every sender has moved.
Add <code>?refresh=N</code> to this page's address to refresh every N seconds (0: never).</p>
</footer>
<noscript><p>This page needs JavaScript to read the JSON API; the figures are also at
/api/v1/models.</p></noscript>
<script>)html";
    html += status_page::ScriptFormat();
    html += status_page::ScriptCharts();
    html += status_page::ScriptCards();
    html += "</script>\n</body>\n</html>\n";
    return html;
  }();
  return page;
}

}  // namespace codedrift
