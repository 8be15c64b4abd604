// The `tokens` symbolizer: splits each record on a delimiter set, interns the tokens, and ends
// every record with the end-of-record symbol.
#include <array>
#include <memory>

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
        table_(kFirstTokenId) {
    is_delimiter_.fill(0);
    for (const char c : options.delimiters) is_delimiter_[static_cast<unsigned char>(c)] = 1;
    // Tokens never contain a newline (alphabet.h reserves "\n" for end of record), so a
    // newline inside a record always separates tokens.
    is_delimiter_['\n'] = 1;
  }

  const Alphabet& alphabet() const override { return alphabet_; }

  size_t Append(std::string_view record, std::vector<SymbolId>& out) override {
    // The record's line terminator belongs to no token: end of record has its own symbol.
    if (record.ends_with('\n')) {
      record.remove_suffix(1);
      if (record.ends_with('\r')) record.remove_suffix(1);
    }
    const size_t before = out.size();
    const char* p = record.data();
    const char* const end = p + record.size();
    while (true) {
      while (p != end && is_delimiter_[static_cast<unsigned char>(*p)]) ++p;
      if (p == end) break;
      const char* const start = p;
      while (p != end && !is_delimiter_[static_cast<unsigned char>(*p)]) ++p;
      out.push_back(Lookup(start, static_cast<size_t>(p - start)));
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
  SymbolId Lookup(const char* token, size_t length) {
    const uint32_t id = mask_digits_ ? table_.Intern<true>(token, length, max_distinct_)
                                     : table_.Intern<false>(token, length, max_distinct_);
    return id == TokenTable::kNotFound ? kOverflowId : id;
  }

  Alphabet alphabet_ = Alphabet::Tokens();
  bool mask_digits_;
  uint32_t max_distinct_;
  std::array<unsigned char, 256> is_delimiter_;
  TokenTable table_;
};

}  // namespace

std::unique_ptr<Symbolizer> MakeTokenSymbolizer(const TokenOptions& options) {
  return std::make_unique<TokenSymbolizer>(options);
}

}  // namespace codedrift
