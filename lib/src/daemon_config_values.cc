// Durations and ratios of the daemon config.
#include <charconv>
#include <cmath>
#include <limits>

#include "codedrift/config_values.h"

#include "daemon_config_text.h"

namespace codedrift {
namespace {

constexpr std::string_view kDurationForm =
    "expected a whole number and a unit (ms, s, m, h or d), e.g. 500ms, 5s, 10m, 1h, 1d";
constexpr std::string_view kRatioForm =
    "expected a percentage like 5% or a ratio from 0 to 1 like 0.05";

bool AllDigits(std::string_view text) {
  if (text.empty()) return false;
  for (char c : text) {
    if (c < '0' || c > '9') return false;
  }
  return true;
}

// Digits with at most one '.' between digits ("5", "2.5", "0.05"); no sign or exponent.
bool IsPlainDecimal(std::string_view text) {
  const size_t dot = text.find('.');
  if (dot == std::string_view::npos) return AllDigits(text);
  return AllDigits(text.substr(0, dot)) && AllDigits(text.substr(dot + 1));
}

}  // namespace

Result<ConfigDuration> ParseDuration(std::string_view text) {
  size_t digits = 0;
  while (digits < text.size() && text[digits] >= '0' && text[digits] <= '9') ++digits;
  const std::string_view number = text.substr(0, digits);
  const std::string_view unit = text.substr(digits);
  int64_t unit_ms = 0;
  if (unit == "ms") {
    unit_ms = 1;
  } else if (unit == "s") {
    unit_ms = 1000;
  } else if (unit == "m") {
    unit_ms = 60 * 1000;
  } else if (unit == "h") {
    unit_ms = 3600 * 1000;
  } else if (unit == "d") {
    unit_ms = 24 * 3600 * 1000;
  }
  if (number.empty() || unit_ms == 0) {
    return Error{"bad duration " + QuoteForMessage(text) + ", " + std::string(kDurationForm)};
  }
  uint64_t count = 0;
  const auto [end, ec] = std::from_chars(number.data(), number.data() + number.size(), count);
  const uint64_t max_count = static_cast<uint64_t>(kMaxConfigDuration.count() / unit_ms);
  if (ec != std::errc() || end != number.data() + number.size() || count > max_count) {
    return Error{"duration " + QuoteForMessage(text) + " is too long, expected at most " +
                 FormatDuration(kMaxConfigDuration)};
  }
  return ConfigDuration(static_cast<int64_t>(count) * unit_ms);
}

std::string FormatDuration(ConfigDuration duration) {
  const int64_t ms = duration.count();
  if (ms == 0) return "0s";
  struct Unit {
    int64_t ms;
    const char* suffix;
  };
  for (const Unit unit :
       {Unit{86400000, "d"}, Unit{3600000, "h"}, Unit{60000, "m"}, Unit{1000, "s"}}) {
    if (ms % unit.ms == 0) return std::to_string(ms / unit.ms) + unit.suffix;
  }
  return std::to_string(ms) + "ms";
}

Result<double> ParseRatio(std::string_view text) {
  const bool percent = text.ends_with('%');
  const std::string_view number = percent ? text.substr(0, text.size() - 1) : text;
  double value = 0;
  bool parsed = false;
  if (IsPlainDecimal(number)) {
    const auto [end, ec] = std::from_chars(number.data(), number.data() + number.size(), value,
                                           std::chars_format::fixed);
    parsed = ec == std::errc() && end == number.data() + number.size() && std::isfinite(value);
  }
  if (!parsed) {
    return Error{"bad " + std::string(percent ? "percentage " : "ratio ") + QuoteForMessage(text) +
                 ", " + std::string(kRatioForm)};
  }
  if (percent) value /= 100.0;
  if (value > 1.0) {
    return Error{QuoteForMessage(text) + " is more than 100%, " + std::string(kRatioForm)};
  }
  return value;
}

}  // namespace codedrift
