// `compare --svg`: a self-contained SVG bar chart of two symbol distributions side by side,
// one pair of bars per symbol, so the symbols that moved stand out at a glance.
#pragma once

#include <string>
#include <vector>

namespace codedrift::cli {

struct DistributionBar {
  std::string label;  // the symbol as a person reads it
  double probability_a = 0;
  double probability_b = 0;
};

// Plain description of one chart.
struct DistributionChart {
  std::string title;
  std::string name_a;  // legend text of each side, e.g. "A: before.log"
  std::string name_b;
  std::vector<DistributionBar> bars;
};

// At most this many symbols are drawn (those with the largest probability on either side);
// the chart says when it cut.
inline constexpr size_t kMaxDistributionBars = 48;

std::string RenderDistributionChart(const DistributionChart& chart);

}  // namespace codedrift::cli
