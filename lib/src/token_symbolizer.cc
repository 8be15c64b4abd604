// The `tokens` symbolizer: splits each record on a delimiter set, interns the tokens, and ends
// every record with the end-of-record symbol.
#include <memory>

#include "codedrift/delimiter_set.h"
#include "codedrift/symbolizer.h"

#include "token_table.h"

namespace codedrift {
namespace {

constexpr SymbolId kEndOfRecordId = 0;  // key kEndOfRecordToken
constexpr SymbolId kOverflowId = 1;     // key kOverflowToken
constexpr SymbolId kFirstTokenId = 2;

class TokenSymbolizer final : public Symbolizer {
 public:
  explicit TokenSymbolizer(const TokenOptions& options)
      : mask_digits_(options.mask_digits),
        max_distinct_(options.max_distinct),
        // Tokens never contain a newline (alphabet.h reserves "\n" for end of record), so a
        // newline inside a record always separates tokens.
        delimiters_(options.delimiters + '\n'),
        table_(kFirstTokenId) {}

  const Alphabet& alphabet() const override { return alphabet_; }

  size_t Append(std::string_view record, std::vector<SymbolId>& out) override {
    // The record's line terminator belongs to no token: end of record has its own symbol.
    if (record.ends_with('\n')) {
      record.remove_suffix(1);
      if (record.ends_with('\r')) record.remove_suffix(1);
    }
    const size_t before = out.size();
    if (mask_digits_) {
      delimiters_.ForEachToken(record, [&](const char* token, size_t length) {
        out.push_back(Found(table_.Intern<true>(token, length, max_distinct_)));
      });
    } else {
      delimiters_.ForEachToken(record, [&](const char* token, size_t length) {
        out.push_back(Found(table_.Intern<false>(token, length, max_distinct_)));
      });
    }
    out.push_back(kEndOfRecordId);
    return out.size() - before;
  }

  SymbolId IdLimit() const override { return kFirstTokenId + table_.size(); }

  SymbolKey KeyOf(SymbolId id) const override {
    if (id == kEndOfRecordId) return SymbolKey(kEndOfRecordToken);
    if (id == kOverflowId) return SymbolKey(kOverflowToken);
    return SymbolKey(table_.TextOf(id));
  }

  SymbolizerState ExportState() const override {
    SymbolizerState state;
    for (SymbolId id = kFirstTokenId; id < IdLimit(); ++id) state.keys.push_back(KeyOf(id));
    return state;
  }

  // Stored texts are already masked, so interning them unmasked stores the same texts.
  Status ImportState(const SymbolizerState& state) override {
    if (state.keys.size() > max_distinct_) {
      return Error{"checkpoint holds more tokens than max_distinct"};
    }
    TokenTable table(kFirstTokenId);
    for (const SymbolKey& key : state.keys) {
      if (key.empty() || key.find('\n') != SymbolKey::npos) {
        return Error{"checkpoint holds a token no record could produce"};
      }
      if (table.Intern<false>(key.data(), key.size(), max_distinct_) + 1 !=
          kFirstTokenId + table.size()) {
        return Error{"checkpoint holds the same token twice"};
      }
    }
    table_ = std::move(table);
    return Ok{};
  }

 private:
  static SymbolId Found(uint32_t id) { return id == TokenTable::kNotFound ? kOverflowId : id; }

  Alphabet alphabet_ = Alphabet::Tokens();
  bool mask_digits_;
  uint32_t max_distinct_;
  DelimiterSet delimiters_;
  TokenTable table_;
};

}  // namespace

std::unique_ptr<Symbolizer> MakeTokenSymbolizer(const TokenOptions& options) {
  return std::make_unique<TokenSymbolizer>(options);
}

}  // namespace codedrift
