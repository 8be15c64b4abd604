// The pieces the status page is assembled from (status_page.cc). Each returns a static,
// self-contained text with no reference to anything outside the page.
#pragma once

#include <string_view>

namespace codedrift::status_page {

std::string_view Style();         // CSS: layout, palette, cards, charts
std::string_view ScriptFormat();  // JS: number formatting and DOM helpers
std::string_view ScriptCharts();  // JS: the SVG time chart and the drift bar chart
std::string_view ScriptCards();   // JS: the cards, the refresh loop

}  // namespace codedrift::status_page
