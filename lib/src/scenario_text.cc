#include "scenario_text.h"

#include <charconv>
#include <cmath>

namespace codedrift::scenario_text {
namespace {

constexpr int64_t kNanosPerSecond = 1'000'000'000;

// Unsigned decimal digits, zero-filled to at least `width`.
void AppendDigits(uint64_t value, int width, int base, std::string& out) {
  char buffer[24];
  const auto [end, ec] = std::to_chars(buffer, buffer + sizeof buffer, value, base);
  const int digits = static_cast<int>(end - buffer);
  if (width > digits) out.append(static_cast<size_t>(width - digits), '0');
  out.append(buffer, end);
}

// The integer on the grid nearest to value (within 1e-6), if any.
std::optional<int64_t> NearGridPoint(double value) {
  const double nearest = std::round(value);
  if (std::fabs(value - nearest) <= 1e-6) return static_cast<int64_t>(nearest);
  return std::nullopt;
}

}  // namespace

int64_t Pow10(int exponent) {
  int64_t result = 1;
  for (int i = 0; i < exponent; ++i) result *= 10;
  return result;
}

std::optional<Grid> GridOf(double low, double high, int decimals) {
  const double scale = static_cast<double>(Pow10(decimals));
  const double low_scaled = low * scale;
  const double high_scaled = high * scale;
  Grid grid;
  grid.low = NearGridPoint(low_scaled).value_or(static_cast<int64_t>(std::ceil(low_scaled)));
  grid.high = NearGridPoint(high_scaled).value_or(static_cast<int64_t>(std::floor(high_scaled)));
  if (grid.low > grid.high) return std::nullopt;
  return grid;
}

void AppendScaled(int64_t scaled, int decimals, NumberBase base, int pad, std::string& out) {
  const bool negative = scaled < 0;
  const uint64_t magnitude =
      negative ? uint64_t{0} - static_cast<uint64_t>(scaled) : static_cast<uint64_t>(scaled);
  if (base == NumberBase::kHex) {
    AppendDigits(magnitude, pad, 16, out);
    return;
  }
  if (negative) out += '-';
  const uint64_t unit = static_cast<uint64_t>(Pow10(decimals));
  AppendDigits(magnitude / unit, std::max(pad, 1), 10, out);
  if (decimals > 0) {
    out += '.';
    AppendDigits(magnitude % unit, decimals, 10, out);
  }
}

void AppendTime(int64_t unix_seconds, std::chrono::nanoseconds since, const TimeField& field,
                std::string& out) {
  const int64_t nanos = since.count() % kNanosPerSecond;
  const int64_t seconds = unix_seconds + since.count() / kNanosPerSecond;
  const int64_t fraction = nanos / Pow10(9 - field.decimals);
  switch (field.style) {
    case TimeStyle::kIso:
      out += FormatUtc(unix_seconds, since, field.decimals);
      return;
    case TimeStyle::kEpoch:
      AppendDigits(static_cast<uint64_t>(seconds), 1, 10, out);
      if (field.decimals > 0) {
        out += '.';
        AppendDigits(static_cast<uint64_t>(fraction), field.decimals, 10, out);
      }
      return;
    case TimeStyle::kEpochMillis:
      AppendDigits(static_cast<uint64_t>(seconds * 1000 + nanos / 1'000'000), 1, 10, out);
      return;
  }
}

bool IsJsonNumber(const FieldShape& shape) {
  if (const auto* number = std::get_if<NumberField>(&shape)) {
    return number->base == NumberBase::kDecimal && number->pad <= 1 && number->unit.empty();
  }
  if (const auto* counter = std::get_if<CounterField>(&shape)) {
    return counter->base == NumberBase::kDecimal && counter->pad <= 1;
  }
  if (const auto* time = std::get_if<TimeField>(&shape)) return time->style != TimeStyle::kIso;
  return false;
}

void AppendCsvValue(std::string_view value, std::string& out) {
  if (value.find_first_of(",\"\r\n") == std::string_view::npos) {
    out.append(value);
    return;
  }
  out += '"';
  for (const char c : value) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
}

void AppendJsonString(std::string_view value, std::string& out) {
  static constexpr char kHex[] = "0123456789abcdef";
  out += '"';
  for (const char c : value) {
    const auto byte = static_cast<unsigned char>(c);
    if (c == '"' || c == '\\') {
      out += '\\';
      out += c;
    } else if (c == '\n') {
      out += "\\n";
    } else if (c == '\t') {
      out += "\\t";
    } else if (c == '\r') {
      out += "\\r";
    } else if (byte < 0x20) {
      out += "\\u00";
      out += kHex[byte >> 4];
      out += kHex[byte & 15];
    } else {
      out += c;
    }
  }
  out += '"';
}

std::string NumberText(double value) {
  char buffer[64];
  const auto [end, ec] = std::to_chars(buffer, buffer + sizeof buffer, value);
  if (ec != std::errc()) return "?";
  return std::string(buffer, end);
}

}  // namespace codedrift::scenario_text

namespace codedrift {

std::string FormatUtc(int64_t unix_seconds, std::chrono::nanoseconds since, int decimals) {
  using namespace std::chrono;
  constexpr int64_t kNanos = 1'000'000'000;
  const int64_t seconds = unix_seconds + since.count() / kNanos;
  const int64_t day_number = seconds >= 0 ? seconds / 86400 : (seconds - 86399) / 86400;
  const int64_t second_of_day = seconds - day_number * 86400;
  const year_month_day date{sys_days{days{day_number}}};
  char buffer[48];
  const int written = std::snprintf(
      buffer, sizeof buffer, "%04d-%02u-%02uT%02d:%02d:%02d", static_cast<int>(date.year()),
      static_cast<unsigned>(date.month()), static_cast<unsigned>(date.day()),
      static_cast<int>(second_of_day / 3600), static_cast<int>(second_of_day / 60 % 60),
      static_cast<int>(second_of_day % 60));
  std::string out(buffer, static_cast<size_t>(written));
  if (decimals > 0) {
    const int64_t fraction = since.count() % kNanos / scenario_text::Pow10(9 - decimals);
    out += '.';
    const std::string digits = std::to_string(fraction);
    out.append(static_cast<size_t>(decimals) - digits.size(), '0');
    out += digits;
  }
  out += 'Z';
  return out;
}

std::string FormatSimulatedDuration(std::chrono::nanoseconds duration) {
  const int64_t millis = duration.count() / 1'000'000;
  if (millis < 1000) return std::to_string(millis) + "ms";
  const int64_t days = millis / 86'400'000;
  const int64_t hours = millis / 3'600'000 % 24;
  const int64_t minutes = millis / 60'000 % 60;
  const int64_t seconds = millis / 1000 % 60;
  const int64_t rest = millis % 1000;
  std::string out;
  if (days > 0) out += std::to_string(days) + "d";
  if (hours > 0) out += std::to_string(hours) + "h";
  if (minutes > 0) out += std::to_string(minutes) + "m";
  if (seconds > 0 || rest > 0) {
    out += std::to_string(seconds);
    if (rest > 0) {
      std::string digits = std::to_string(rest);
      digits.insert(0, 3 - digits.size(), '0');
      while (digits.back() == '0') digits.pop_back();
      out += "." + digits;
    }
    out += 's';
  }
  return out;
}

}  // namespace codedrift
