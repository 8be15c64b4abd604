// The `tokens` symbolizer (MakeTokenSymbolizer in symbolizer.h), declared for the library's own
// use: Model symbolizes known tokens on several threads at once through AppendKnown.
#pragma once

#include <string_view>
#include <vector>

#include "codedrift/delimiter_set.h"
#include "codedrift/symbolizer.h"

#include "line_memo.h"
#include "token_table.h"

namespace codedrift {

// Splits each record on a delimiter set, interns the tokens and ends every record with the
// end-of-record symbol. Not thread-safe, except that AppendKnown (const) may run on several
// threads at once while nothing calls a non-const method.
class TokenSymbolizer final : public Symbolizer {
 public:
  explicit TokenSymbolizer(const TokenOptions& options);

  const Alphabet& alphabet() const override { return alphabet_; }
  size_t Append(std::string_view record, std::vector<SymbolId>& out) override;
  // Append without storing: when every token of the record is known (or the table is full,
  // so that unknown ones are the overflow symbol), appends exactly what Append would and
  // returns true; otherwise returns false and leaves `out` as it was.
  bool AppendKnown(std::string_view record, std::vector<SymbolId>& out) const;

  // A run of lines (each ending in '\n', the last one possibly not), in one scan: the ids Append
  // gives each line in turn. AppendKnownLines stores nothing: it stops before the first line
  // holding a token to store and returns the bytes of the lines it did (all: run.size()).
  // With a memo, AppendKnownLines takes lines it has seen from it (see line_memo.h).
  void AppendLines(std::string_view run, std::vector<SymbolId>& out);
  size_t AppendKnownLines(std::string_view run, std::vector<SymbolId>& out,
                          LineMemo* memo = nullptr) const;

  SymbolId IdLimit() const override;
  SymbolKey KeyOf(SymbolId id) const override;
  SymbolizerState ExportState() const override;
  Status ImportState(const SymbolizerState& state) override;

 private:
  template <bool kMaskDigits>
  bool AppendKnownAs(std::string_view record, std::vector<SymbolId>& out) const;
  // The scan of a run of lines; lookup(readable_begin, token, length) gives an id, or
  // TokenTable::kMissing to stop before the line. Bytes from readable_begin (<= the run's
  // start) may be read.
  template <class Lookup>
  size_t ScanLines(const char* readable_begin, std::string_view run, std::vector<SymbolId>& out,
                   Lookup&& lookup) const;
  template <bool kMaskDigits>
  size_t KnownLines(const char* readable_begin, std::string_view run,
                    std::vector<SymbolId>& out) const;
  template <bool kMaskDigits>
  size_t MemoLines(std::string_view run, std::vector<SymbolId>& out, LineMemo& memo) const;

  Alphabet alphabet_ = Alphabet::Tokens();
  bool mask_digits_;
  uint32_t max_distinct_;
  DelimiterSet delimiters_;
  // Equal masked lines split into equal tokens unless a digit is a delimiter.
  bool memo_fits_;
  TokenTable table_;
  uint64_t generation_;  // unique to this table's contents: a new one when it is replaced
};

}  // namespace codedrift
