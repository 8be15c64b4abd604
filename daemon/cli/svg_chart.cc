#include "svg_chart.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

namespace codedrift::cli {
namespace {

constexpr double kWidth = 760;
constexpr double kHeight = 460;
constexpr double kLeft = 64;
constexpr double kRight = 24;
constexpr double kTop = 48;
constexpr double kBottom = 56;

std::string Escape(const std::string& text) {
  std::string out;
  for (const char c : text) {
    switch (c) {
      case '&':
        out += "&amp;";
        break;
      case '<':
        out += "&lt;";
        break;
      case '>':
        out += "&gt;";
        break;
      case '"':
        out += "&quot;";
        break;
      default:
        // Control bytes are not allowed in XML 1.0, and a token need not be UTF-8.
        out +=
            static_cast<unsigned char>(c) < 0x20 || static_cast<unsigned char>(c) >= 0x80 ? '?' : c;
    }
  }
  return out;
}

// Maps log2 p in [-span, 0] and a length in [0, top] to the plot area.
struct Axes {
  double span;  // powers of two shown on the probability axis
  double top;   // bits shown on the length axis
  double X(double log2_p) const {
    return kLeft + (kWidth - kLeft - kRight) * (1.0 + log2_p / span);
  }
  double Y(double bits) const {
    return kHeight - kBottom - (kHeight - kTop - kBottom) * bits / top;
  }
};

int TickStep(double range) {
  for (const int step : {1, 2, 4, 5, 8, 10, 16, 20, 32}) {
    if (range / step <= 12) return step;
  }
  return 64;
}

}  // namespace

std::string SvgEscape(const std::string& text) { return Escape(text); }

std::string SvgNumber(double value) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.1f", value);
  return buffer;
}

std::string RenderLengthChart(const LengthChart& chart) {
  std::vector<ChartPoint> points;
  for (const ChartPoint& point : chart.points) {
    if (point.probability > 0) points.push_back(point);
  }
  std::sort(points.begin(), points.end(),
            [](const ChartPoint& a, const ChartPoint& b) { return a.probability > b.probability; });
  const bool cut = points.size() > kMaxChartPoints;
  if (cut) points.resize(kMaxChartPoints);

  double min_log2 = -1;
  double max_bits = 1;
  for (const ChartPoint& point : points) {
    min_log2 = std::min(min_log2, std::log2(point.probability));
    max_bits = std::max(max_bits, point.length_bits);
  }
  Axes axes;
  axes.span = std::ceil(-min_log2);
  axes.top = std::ceil(std::max(max_bits, axes.span) + 0.5);

  std::string svg;
  svg += "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" + SvgNumber(kWidth) + "\" height=\"" +
         SvgNumber(kHeight) + "\" viewBox=\"0 0 " + SvgNumber(kWidth) + " " + SvgNumber(kHeight) +
         "\" font-family=\"sans-serif\" font-size=\"12\">\n";
  svg += "<rect width=\"100%\" height=\"100%\" fill=\"#fbfbf8\"/>\n";
  svg += "<text x=\"" + SvgNumber(kLeft) + "\" y=\"24\" font-size=\"15\" font-weight=\"bold\">" +
         Escape(chart.title) + "</text>\n";

  // Grid and ticks.
  const int x_step = TickStep(axes.span);
  for (int k = 0; k <= static_cast<int>(axes.span); k += x_step) {
    const double x = axes.X(-k);
    svg += "<line x1=\"" + SvgNumber(x) + "\" y1=\"" + SvgNumber(kTop) + "\" x2=\"" + SvgNumber(x) +
           "\" y2=\"" + SvgNumber(kHeight - kBottom) + "\" stroke=\"#e2e2dc\"/>\n";
    svg += "<text x=\"" + SvgNumber(x) + "\" y=\"" + SvgNumber(kHeight - kBottom + 16) +
           "\" text-anchor=\"middle\">" + (k == 0 ? std::string("1") : "2^-" + std::to_string(k)) +
           "</text>\n";
  }
  const int y_step = TickStep(axes.top);
  for (int bits = 0; bits <= static_cast<int>(axes.top); bits += y_step) {
    const double y = axes.Y(bits);
    svg += "<line x1=\"" + SvgNumber(kLeft) + "\" y1=\"" + SvgNumber(y) + "\" x2=\"" +
           SvgNumber(kWidth - kRight) + "\" y2=\"" + SvgNumber(y) + "\" stroke=\"#e2e2dc\"/>\n";
    svg += "<text x=\"" + SvgNumber(kLeft - 8) + "\" y=\"" + SvgNumber(y + 4) +
           "\" text-anchor=\"end\">" + std::to_string(bits) + "</text>\n";
  }
  svg += "<rect x=\"" + SvgNumber(kLeft) + "\" y=\"" + SvgNumber(kTop) + "\" width=\"" +
         SvgNumber(kWidth - kLeft - kRight) + "\" height=\"" + SvgNumber(kHeight - kTop - kBottom) +
         "\" fill=\"none\" stroke=\"#888\"/>\n";
  svg += "<text x=\"" + SvgNumber((kLeft + kWidth - kRight) / 2) + "\" y=\"" +
         SvgNumber(kHeight - 14) +
         "\" text-anchor=\"middle\">symbol probability p (log scale)</text>\n";
  svg += "<text transform=\"translate(18 " + SvgNumber((kTop + kHeight - kBottom) / 2) +
         ") rotate(-90)\" text-anchor=\"middle\">" + Escape(chart.length_caption) + "</text>\n";

  // The ideal length -log2 p is a straight line on a log2 probability axis.
  svg += "<line x1=\"" + SvgNumber(axes.X(-axes.span)) + "\" y1=\"" + SvgNumber(axes.Y(axes.span)) +
         "\" x2=\"" + SvgNumber(axes.X(0)) + "\" y2=\"" + SvgNumber(axes.Y(0)) +
         "\" stroke=\"#2a7f62\" stroke-width=\"2\" stroke-dasharray=\"6 4\"/>\n";

  for (const ChartPoint& point : points) {
    const double x = axes.X(std::log2(point.probability));
    const double y = axes.Y(point.length_bits);
    svg += "<circle cx=\"" + SvgNumber(x) + "\" cy=\"" + SvgNumber(y) + "\" r=\"3.5\" fill=\"" +
           (point.escaped ? "#d9822b" : "#3366aa") + "\" fill-opacity=\"0.75\"><title>" +
           Escape(point.label) + "</title></circle>\n";
  }

  // Legend.
  const double lx = kWidth - kRight - 250;
  const double ly = kTop + 14;
  svg += "<rect x=\"" + SvgNumber(lx - 8) + "\" y=\"" + SvgNumber(ly - 12) +
         "\" width=\"250\" height=\"58\" fill=\"#ffffff\" stroke=\"#ccc\"/>\n";
  svg += "<circle cx=\"" + SvgNumber(lx) + "\" cy=\"" + SvgNumber(ly - 4) +
         "\" r=\"3.5\" fill=\"#3366aa\"/>";
  svg += "<text x=\"" + SvgNumber(lx + 10) + "\" y=\"" + SvgNumber(ly) + "\">codeword</text>\n";
  svg += "<circle cx=\"" + SvgNumber(lx) + "\" cy=\"" + SvgNumber(ly + 14) +
         "\" r=\"3.5\" fill=\"#d9822b\"/>";
  svg += "<text x=\"" + SvgNumber(lx + 10) + "\" y=\"" + SvgNumber(ly + 18) +
         "\">not covered: escape + literal</text>\n";
  svg += "<line x1=\"" + SvgNumber(lx - 4) + "\" y1=\"" + SvgNumber(ly + 32) + "\" x2=\"" +
         SvgNumber(lx + 4) + "\" y2=\"" + SvgNumber(ly + 32) +
         "\" stroke=\"#2a7f62\" stroke-width=\"2\"/>";
  svg += "<text x=\"" + SvgNumber(lx + 10) + "\" y=\"" + SvgNumber(ly + 36) +
         "\">ideal length -log2 p</text>\n";
  if (cut) {
    svg += "<text x=\"" + SvgNumber(kLeft + 8) + "\" y=\"" + SvgNumber(kTop + 16) + "\">the " +
           std::to_string(kMaxChartPoints) + " most probable symbols are shown</text>\n";
  }
  svg += "</svg>\n";
  return svg;
}

}  // namespace codedrift::cli
