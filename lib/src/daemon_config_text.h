// Text helpers for config, scenario and code-table error messages: quoting user text safely,
// and did-you-mean suggestions by edit distance. Internal to the library.
#pragma once

#include <initializer_list>
#include <span>
#include <string>
#include <string_view>

namespace codedrift {

// 'text' in single quotes, with control and non-ASCII bytes escaped as \xNN and anything past
// 48 bytes elided as "...", so hostile input cannot garble a one-line message.
std::string QuoteForMessage(std::string_view text);

// Levenshtein distance (insertions, deletions, substitutions; each costs 1).
size_t EditDistance(std::string_view a, std::string_view b);

// The candidate closest to `word` when it is close enough to be a likely typo (distance at
// most 2, or a third of the word's length when that is more); empty otherwise.
std::string_view ClosestMatch(std::string_view word, std::span<const std::string_view> candidates);

// "a, b or c".
std::string JoinChoices(std::span<const std::string_view> choices);

}  // namespace codedrift
