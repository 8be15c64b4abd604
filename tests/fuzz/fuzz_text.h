// Checks shared by the fuzz targets of text formats: an error message names the file and a
// line (and column) that exist in the text.
#pragma once

#include <algorithm>
#include <cstddef>
#include <string_view>

namespace codedrift::fuzz {

// Reads a decimal number at the front of `text` (removing it); false when there is none.
inline bool TakeNumber(std::string_view& text, long* value) {
  size_t digits = 0;
  *value = 0;
  while (digits < text.size() && digits < 9 && text[digits] >= '0' && text[digits] <= '9') {
    *value = *value * 10 + (text[digits] - '0');
    ++digits;
  }
  text.remove_prefix(digits);
  return digits > 0;
}

// Lines a position may name: every line of the text, plus the one after a final newline.
inline long LineCount(std::string_view text) {
  return 1 + static_cast<long>(std::count(text.begin(), text.end(), '\n'));
}

// True when `line` reads "<file>:<line>:<column>: <what>" (with_column) or "<file>:<line>:
// <what>", the line in 1..LineCount(text), the column >= 1 and the reason not empty.
inline bool HasPosition(std::string_view line, std::string_view file, std::string_view text,
                        bool with_column) {
  if (line.substr(0, file.size()) != file) return false;
  line.remove_prefix(file.size());
  long number = 0;
  if (line.empty() || line.front() != ':') return false;
  line.remove_prefix(1);
  if (!TakeNumber(line, &number) || number < 1 || number > LineCount(text)) return false;
  if (with_column) {
    if (line.empty() || line.front() != ':') return false;
    line.remove_prefix(1);
    if (!TakeNumber(line, &number) || number < 1) return false;
  }
  return line.size() > 2 && line.substr(0, 2) == ": ";
}

}  // namespace codedrift::fuzz
