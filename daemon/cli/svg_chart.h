// `inspect --svg`: a self-contained SVG chart of each symbol's probability (log scale) against
// its codeword length, with the ideal length -log2 p drawn as a line, so over- and under-long
// codewords stand out.
#pragma once

#include <string>
#include <vector>

namespace codedrift::cli {

struct ChartPoint {
  double probability = 0;  // > 0
  double length_bits = 0;
  bool escaped = false;  // the code does not cover it: escape + literal
  std::string label;     // shown as the point's tooltip
};

// Plain description of one chart.
struct LengthChart {
  std::string title;
  std::string length_caption;  // e.g. "deployed codeword length (bits)"
  std::vector<ChartPoint> points;
};

// At most this many points are drawn (the most probable ones); the chart says when it cut.
inline constexpr size_t kMaxChartPoints = 4096;

std::string RenderLengthChart(const LengthChart& chart);

// Text made safe for SVG (XML 1.0) content and attribute values: markup characters as
// entities, control bytes and bytes above 0x7f as '?' (a token need not be UTF-8).
std::string SvgEscape(const std::string& text);

// A coordinate or size as SVG attribute text, to one decimal ("12.5"): finer than a pixel
// needs, and short.
std::string SvgNumber(double value);

}  // namespace codedrift::cli
