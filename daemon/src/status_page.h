// The status page served at GET / (self-contained HTML; no external resources).
#pragma once

#include <string_view>

namespace codedrift {

std::string_view StatusPageHtml();

}  // namespace codedrift
