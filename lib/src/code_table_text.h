// Text helpers shared by the code-table reader and writer: YAML scalar quoting and number
// formatting (did-you-mean suggestions come from daemon_config_text.h). Private to the library.
#pragma once

#include <string>
#include <string_view>

namespace codedrift::table_text {

// A YAML double-quoted scalar that yaml-cpp reads back as exactly `text`: quote and backslash
// escaped, control bytes as \n, \t, \r or \xNN, bytes >= 0x80 written raw (they pass through
// yaml-cpp unchanged, so tokens that are not UTF-8 still round-trip).
std::string DoubleQuoted(std::string_view text);

// `text` as a plain scalar when that reads back unchanged, otherwise DoubleQuoted(text).
std::string Scalar(std::string_view text);

// The shortest decimal text that reads back as `value` ("1", "1.25", "0.9999999999999999").
std::string ShortestDouble(double value);

}  // namespace codedrift::table_text
