#include "compare_chart.h"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "svg_chart.h"

namespace codedrift::cli {
namespace {

constexpr double kWidth = 860;
constexpr double kHeight = 460;
constexpr double kLeft = 64;
constexpr double kRight = 24;
constexpr double kTop = 64;
constexpr double kBottom = 96;  // room for the rotated symbol labels
constexpr char kColorA[] = "#3366aa";
constexpr char kColorB[] = "#d9822b";

std::string Percent(double probability) {
  char buffer[32];
  std::snprintf(buffer, sizeof buffer, "%.3f%%", 100.0 * probability);
  return buffer;
}

// A round top for the probability axis and its tick step: 1, 2 or 5 times a power of ten.
std::pair<double, double> Scale(double max_probability) {
  double step = 1e-6;
  while (max_probability / step > 8) {
    const double mantissa = std::round(step / std::pow(10.0, std::floor(std::log10(step))));
    step *= mantissa == 2 ? 2.5 : 2;  // 1 -> 2 -> 5 -> 10 -> ...
  }
  return {step * std::ceil(max_probability / step), step};
}

}  // namespace

std::string RenderDistributionChart(const DistributionChart& chart) {
  std::vector<DistributionBar> bars = chart.bars;
  std::stable_sort(bars.begin(), bars.end(), [](const auto& x, const auto& y) {
    return std::max(x.probability_a, x.probability_b) > std::max(y.probability_a, y.probability_b);
  });
  const bool cut = bars.size() > kMaxDistributionBars;
  if (cut) bars.resize(kMaxDistributionBars);

  double highest = 0;
  for (const auto& bar : bars) highest = std::max({highest, bar.probability_a, bar.probability_b});
  // Named variables, not a structured binding: the lambda below captures `top`, which clang
  // before 16 refuses for bindings.
  const std::pair<double, double> scale = Scale(std::max(highest, 1e-6));
  const double top = scale.first;
  const double step = scale.second;
  const double plot_width = kWidth - kLeft - kRight;
  const double plot_height = kHeight - kTop - kBottom;
  const double slot = plot_width / static_cast<double>(std::max<size_t>(bars.size(), 1));
  const double bar_width = slot * 0.38;
  const auto y_of = [&](double p) { return kHeight - kBottom - plot_height * p / top; };

  std::string svg = "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" + SvgNumber(kWidth) +
                    "\" height=\"" + SvgNumber(kHeight) + "\" viewBox=\"0 0 " + SvgNumber(kWidth) +
                    " " + SvgNumber(kHeight) + "\" font-family=\"sans-serif\" font-size=\"12\">\n";
  svg += "<rect width=\"100%\" height=\"100%\" fill=\"#fbfbf8\"/>\n";
  svg += "<text x=\"" + SvgNumber(kLeft) + "\" y=\"24\" font-size=\"15\" font-weight=\"bold\">" +
         SvgEscape(chart.title) + "</text>\n";
  // Legend under the title.
  svg += "<rect x=\"" + SvgNumber(kLeft) + "\" y=\"34\" width=\"12\" height=\"12\" fill=\"" +
         kColorA + "\"/><text x=\"" + SvgNumber(kLeft + 18) + "\" y=\"45\">" +
         SvgEscape(chart.name_a) + "</text>\n";
  svg += "<rect x=\"" + SvgNumber(kLeft + plot_width / 2) +
         "\" y=\"34\" width=\"12\" height=\"12\" " + "fill=\"" + kColorB + "\"/><text x=\"" +
         SvgNumber(kLeft + plot_width / 2 + 18) + "\" y=\"45\">" + SvgEscape(chart.name_b) +
         "</text>\n";

  for (double p = 0; p <= top + step / 2; p += step) {
    const double y = y_of(p);
    svg += "<line x1=\"" + SvgNumber(kLeft) + "\" y1=\"" + SvgNumber(y) + "\" x2=\"" +
           SvgNumber(kWidth - kRight) + "\" y2=\"" + SvgNumber(y) + "\" stroke=\"#e2e2dc\"/>\n";
    char label[32];
    std::snprintf(label, sizeof label, "%g", p);
    svg += "<text x=\"" + SvgNumber(kLeft - 8) + "\" y=\"" + SvgNumber(y + 4) +
           "\" text-anchor=\"end\">" + label + "</text>\n";
  }
  svg += "<text transform=\"translate(18 " + SvgNumber(kTop + plot_height / 2) +
         ") rotate(-90)\" text-anchor=\"middle\">probability</text>\n";

  for (size_t i = 0; i < bars.size(); ++i) {
    const DistributionBar& bar = bars[i];
    const double x = kLeft + slot * static_cast<double>(i) + slot * 0.12;
    const std::string label = SvgEscape(bar.label);
    const auto draw = [&](double at, double p, const char* color, const char* side) {
      svg += "<rect class=\"bar-" + std::string(side) + "\" x=\"" + SvgNumber(at) + "\" y=\"" +
             SvgNumber(y_of(p)) + "\" width=\"" + SvgNumber(bar_width) + "\" height=\"" +
             SvgNumber(y_of(0) - y_of(p)) + "\" fill=\"" + color + "\"><title>" + label + " " +
             side + ": " + Percent(p) + "</title></rect>\n";
    };
    draw(x, bar.probability_a, kColorA, "a");
    draw(x + bar_width, bar.probability_b, kColorB, "b");
    const double label_x = x + bar_width;
    const double label_y = kHeight - kBottom + 12;
    svg += "<text transform=\"translate(" + SvgNumber(label_x) + " " + SvgNumber(label_y) +
           ") rotate(-60)\" text-anchor=\"end\" font-size=\"10\">" + label + "</text>\n";
  }
  svg += "<rect x=\"" + SvgNumber(kLeft) + "\" y=\"" + SvgNumber(kTop) + "\" width=\"" +
         SvgNumber(plot_width) + "\" height=\"" + SvgNumber(plot_height) +
         "\" fill=\"none\" stroke=\"#888\"/>\n";
  if (cut) {
    svg += "<text x=\"" + SvgNumber(kWidth - kRight) + "\" y=\"24\" text-anchor=\"end\">the " +
           std::to_string(kMaxDistributionBars) + " most probable symbols are shown</text>\n";
  }
  svg += "</svg>\n";
  return svg;
}

}  // namespace codedrift::cli
