// The `tokens` symbolizer: splits each record on a delimiter set, interns the tokens, and ends
// every record with the end-of-record symbol.
#include "token_symbolizer.h"

#include <algorithm>
#include <atomic>
#include <cstring>
#include <memory>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace codedrift {
namespace {

constexpr SymbolId kEndOfRecordId = 0;  // key kEndOfRecordToken
constexpr SymbolId kOverflowId = 1;     // key kOverflowToken
constexpr SymbolId kFirstTokenId = 2;

// The record's line terminator belongs to no token: end of record has its own symbol.
std::string_view WithoutTerminator(std::string_view record) {
  if (record.ends_with('\n')) {
    record.remove_suffix(1);
    if (record.ends_with('\r')) record.remove_suffix(1);
  }
  return record;
}

SymbolId Found(uint32_t id) { return id == TokenTable::kNotFound ? kOverflowId : id; }

// Table contents get a number no other table had, so a line memo can tell them apart.
uint64_t NewGeneration() {
  static std::atomic<uint64_t> last{0};
  return last.fetch_add(1, std::memory_order_relaxed) + 1;
}

// Appends the ids of memoized lines to `out` without a growth check and a library call per
// line: `out` is grown ahead (zeroed in bulk) and cut back to what was written when done.
// Copies 4 ids at a time, reading and writing up to 3 past the line's ids (LineMemo pads
// them; the growth leaves room).
class LineIdWriter {
 public:
  explicit LineIdWriter(std::vector<SymbolId>& out) : out_(out), used_(out.size()) {}
  LineIdWriter(const LineIdWriter&) = delete;
  LineIdWriter& operator=(const LineIdWriter&) = delete;
  ~LineIdWriter() { out_.resize(used_); }

  // The line's ids, then its end of record.
  void Append(std::span<const SymbolId> ids) {
    const size_t n = ids.size();
    if (out_.size() < used_ + n + kRoom) {
      out_.resize(used_ + n + kRoom + kGrowth);
    }
    SymbolId* const to = out_.data() + used_;
    for (size_t k = 0; k < n; k += 4) {
#if defined(__SSE2__)
      _mm_storeu_si128(reinterpret_cast<__m128i*>(to + k),
                       _mm_loadu_si128(reinterpret_cast<const __m128i*>(ids.data() + k)));
#else
      std::memcpy(to + k, ids.data() + k, 4 * sizeof(SymbolId));
#endif
    }
    to[n] = kEndOfRecordId;
    used_ += n + 1;
  }
  // `out` at its true size, for code that appends to it directly; then Resume.
  std::vector<SymbolId>& Flush() {
    out_.resize(used_);
    return out_;
  }
  void Resume() { used_ = out_.size(); }

 private:
  static constexpr size_t kRoom = LineMemo::kIdPadding + 2;  // the over-copy and the end
  static constexpr size_t kGrowth = 1024;  // ids zeroed at a time: each once per run
  std::vector<SymbolId>& out_;
  size_t used_;
};

bool HasDigit(std::string_view text) {
  return text.find_first_of("0123456789") != std::string_view::npos;
}

}  // namespace

TokenSymbolizer::TokenSymbolizer(const TokenOptions& options)
    : mask_digits_(options.mask_digits),
      max_distinct_(options.max_distinct),
      // Tokens never contain a newline (alphabet.h reserves "\n" for end of record), so a
      // newline inside a record always separates tokens.
      delimiters_(options.delimiters + '\n'),
      memo_fits_(!options.mask_digits || !HasDigit(options.delimiters)),
      table_(kFirstTokenId),
      generation_(NewGeneration()) {}

size_t TokenSymbolizer::Append(std::string_view record, std::vector<SymbolId>& out) {
  record = WithoutTerminator(record);
  const size_t before = out.size();
  const char* const begin = record.data();
  if (mask_digits_) {
    delimiters_.ForEachToken(
        record, [&](const char* token, size_t length) __attribute__((always_inline)) {
          out.push_back(Found(table_.Intern<true>(begin, token, length, max_distinct_)));
        });
  } else {
    delimiters_.ForEachToken(
        record, [&](const char* token, size_t length) __attribute__((always_inline)) {
          out.push_back(Found(table_.Intern<false>(begin, token, length, max_distinct_)));
        });
  }
  out.push_back(kEndOfRecordId);
  return out.size() - before;
}

template <bool kMaskDigits>
bool TokenSymbolizer::AppendKnownAs(std::string_view record, std::vector<SymbolId>& out) const {
  record = WithoutTerminator(record);
  const size_t before = out.size();
  const char* const begin = record.data();
  bool known = true;
  delimiters_.ForEachToken(
      record, [&](const char* token, size_t length) __attribute__((always_inline)) {
        const uint32_t id = table_.Find<kMaskDigits>(begin, token, length, max_distinct_);
        known = known && id != TokenTable::kMissing;
        out.push_back(Found(id));
      });
  if (!known) {
    out.resize(before);
    return false;
  }
  out.push_back(kEndOfRecordId);
  return true;
}

bool TokenSymbolizer::AppendKnown(std::string_view record, std::vector<SymbolId>& out) const {
  return mask_digits_ ? AppendKnownAs<true>(record, out) : AppendKnownAs<false>(record, out);
}

// Newlines are delimiters, so tokens never hold one; the delimiter bytes between two tokens
// (usually one) are checked for newlines, each of which ends a record. A token right before a
// newline loses one trailing '\r', as Append strips a line's "\r\n".
template <class Lookup>
size_t TokenSymbolizer::ScanLines(const char* readable_begin, std::string_view run,
                                  std::vector<SymbolId>& out, Lookup&& lookup) const {
  const char* const begin = run.data();
  const char* const end = begin + run.size();
  const char* gap = begin;       // the delimiters since the last token start here
  const char* line = begin;      // the current line starts here
  size_t line_ids = out.size();  // and its ids here in `out`
  const char* stopped = nullptr;
  const auto end_lines = [&](const char* from, const char* to) __attribute__((always_inline)) {
    if (to - from == 1 && *from != '\n') return;  // the usual gap: one delimiter
    for (const char* q = from; q != to; ++q) {
      if (*q != '\n') continue;
      out.push_back(kEndOfRecordId);
      line = q + 1;
      line_ids = out.size();
    }
  };
  delimiters_.ForEachTokenWhile(
      run, [&](const char* token, size_t length) __attribute__((always_inline)) {
        end_lines(gap, token);
        gap = token + length;
        if (token[length - 1] == '\r' && gap != end && *gap == '\n' && --length == 0) return true;
        const uint32_t id = lookup(readable_begin, token, length);
        if (id == TokenTable::kMissing) {
          out.resize(line_ids);
          stopped = line;
          return false;
        }
        out.push_back(Found(id));
        return true;
      });
  if (stopped != nullptr) return static_cast<size_t>(stopped - begin);
  end_lines(gap, end);
  if (line != end) out.push_back(kEndOfRecordId);  // a last line without its newline
  return run.size();
}

void TokenSymbolizer::AppendLines(std::string_view run, std::vector<SymbolId>& out) {
  if (mask_digits_) {
    ScanLines(
        run.data(), run, out,
        [this](const char* begin, const char* token, size_t length) __attribute__((always_inline)) {
          return table_.Intern<true>(begin, token, length, max_distinct_);
        });
  } else {
    ScanLines(
        run.data(), run, out,
        [this](const char* begin, const char* token, size_t length) __attribute__((always_inline)) {
          return table_.Intern<false>(begin, token, length, max_distinct_);
        });
  }
}

template <bool kMaskDigits>
size_t TokenSymbolizer::KnownLines(const char* readable_begin, std::string_view run,
                                   std::vector<SymbolId>& out) const {
  return ScanLines(
      readable_begin, run, out,
      [this](const char* begin, const char* token, size_t length) __attribute__((always_inline)) {
        return table_.Find<kMaskDigits>(begin, token, length, max_distinct_);
      });
}

// Line by line: a line the memo knows is copied from it; the others are scanned, and
// remembered when every token was known.
template <bool kMaskDigits>
size_t TokenSymbolizer::MemoLines(std::string_view run, std::vector<SymbolId>& out,
                                  LineMemo& memo) const {
  const char* const begin = run.data();
  const char* const end = begin + run.size();
  const char* line = begin;
  LineScan scan;
  LineIdWriter writer(out);
  while (line != end && scan.Read<kMaskDigits>(line, end)) {
    const std::string_view with_newline(line, scan.length + 1);
    std::span<const SymbolId> ids;
    if (scan.fits && memo.Find(scan, ids)) {
      writer.Append(ids);
    } else {
      std::vector<SymbolId>& scanned = writer.Flush();
      const size_t before = scanned.size();
      if (KnownLines<kMaskDigits>(begin, with_newline, scanned) != with_newline.size()) {
        return static_cast<size_t>(line - begin);  // it holds a token to store
      }
      if (scan.fits) {
        memo.Remember(scan, std::span(scanned).subspan(before, scanned.size() - before - 1));
      }
      writer.Resume();
    }
    line += with_newline.size();
  }
  if (line == end) return run.size();
  // A last line without its newline.
  std::vector<SymbolId>& rest = writer.Flush();
  const size_t done = KnownLines<kMaskDigits>(begin, std::string_view(line, end - line), rest);
  writer.Resume();
  return static_cast<size_t>(line - begin) + done;
}

size_t TokenSymbolizer::AppendKnownLines(std::string_view run, std::vector<SymbolId>& out,
                                         LineMemo* memo) const {
  if (memo != nullptr && memo_fits_ && memo->Use(generation_, run.size())) {
    return mask_digits_ ? MemoLines<true>(run, out, *memo) : MemoLines<false>(run, out, *memo);
  }
  return mask_digits_ ? KnownLines<true>(run.data(), run, out)
                      : KnownLines<false>(run.data(), run, out);
}

SymbolId TokenSymbolizer::IdLimit() const { return kFirstTokenId + table_.size(); }

SymbolKey TokenSymbolizer::KeyOf(SymbolId id) const {
  if (id == kEndOfRecordId) return SymbolKey(kEndOfRecordToken);
  if (id == kOverflowId) return SymbolKey(kOverflowToken);
  return SymbolKey(table_.TextOf(id));
}

SymbolizerState TokenSymbolizer::ExportState() const {
  SymbolizerState state;
  for (SymbolId id = kFirstTokenId; id < IdLimit(); ++id) state.keys.push_back(KeyOf(id));
  return state;
}

// Stored texts are already masked, so interning them unmasked stores the same texts.
Status TokenSymbolizer::ImportState(const SymbolizerState& state) {
  if (state.keys.size() > max_distinct_) {
    return Error{"checkpoint holds more tokens than max_distinct"};
  }
  TokenTable table(kFirstTokenId);
  for (const SymbolKey& key : state.keys) {
    if (key.empty() || key.find('\n') != SymbolKey::npos) {
      return Error{"checkpoint holds a token no record could produce"};
    }
    if (table.Intern<false>(key.data(), key.data(), key.size(), max_distinct_) + 1 !=
        kFirstTokenId + table.size()) {
      return Error{"checkpoint holds the same token twice"};
    }
  }
  table_ = std::move(table);
  generation_ = NewGeneration();
  return Ok{};
}

std::unique_ptr<Symbolizer> MakeTokenSymbolizer(const TokenOptions& options) {
  return std::make_unique<TokenSymbolizer>(options);
}

}  // namespace codedrift
