// How synthesized values are written: numbers as scaled integers (so the digits never depend
// on printf's rounding), times, and the quoting of the csv and json layouts. Internal to the
// library; free functions, no state.
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>

#include "codedrift/scenario.h"

namespace codedrift::scenario_text {

// Largest decimals a number field may have, and the largest |value| × 10^decimals a double
// holds exactly (2^53): grid points are integers below it.
inline constexpr int kMaxDecimals = 6;
inline constexpr double kMaxScaled = 9007199254740992.0;

int64_t Pow10(int exponent);  // 0..18

// The grid points of [low, high] at `decimals`: integers k with k / 10^decimals inside the
// range (ends within 1e-6 of a grid point count as on it, so 1.15 at 2 decimals is 115).
// nullopt when the range holds no grid point.
struct Grid {
  int64_t low = 0;
  int64_t high = 0;
};
std::optional<Grid> GridOf(double low, double high, int decimals);

// `scaled` / 10^decimals as decimal text ("-0.05", "007.5" with pad 3), or `scaled` as
// lowercase hex (decimals 0, scaled >= 0) zero-filled to `pad` digits.
void AppendScaled(int64_t scaled, int decimals, NumberBase base, int pad, std::string& out);

// A record time: unix_seconds + since, in the field's style. Fractions are truncated, never
// rounded up, so a time never reads later than it is.
void AppendTime(int64_t unix_seconds, std::chrono::nanoseconds since, const TimeField& field,
                std::string& out);

// True when the field's text is always a valid JSON number (written bare in the json layout).
bool IsJsonNumber(const FieldShape& shape);

// RFC 4180: quoted (inner quotes doubled) only when the value holds a comma, quote, CR or LF.
void AppendCsvValue(std::string_view value, std::string& out);
// A JSON string literal: quote, backslash and control bytes escaped; other bytes as they are.
void AppendJsonString(std::string_view value, std::string& out);

// A double as the shortest text that reads back the same ("4", "0.25").
std::string NumberText(double value);

}  // namespace codedrift::scenario_text
