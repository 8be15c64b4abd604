// The `bytes` symbolizer: single bytes (id = byte value) or n-byte blocks (dense interned ids).
#include <memory>
#include <vector>

#include "codedrift/symbolizer.h"

#include "value_interner.h"

namespace codedrift {
namespace {

// Single bytes: the id is the byte itself, so the alphabet is fixed at 256 ids.
class SingleByteSymbolizer final : public Symbolizer {
 public:
  const Alphabet& alphabet() const override { return alphabet_; }

  size_t Append(std::string_view record, std::vector<SymbolId>& out) override {
    const size_t start = out.size();
    out.resize(start + record.size());
    SymbolId* dst = out.data() + start;
    for (const char c : record) *dst++ = static_cast<unsigned char>(c);
    return record.size();
  }

  SymbolId IdLimit() const override { return 256; }
  SymbolKey KeyOf(SymbolId id) const override { return SymbolKey(1, static_cast<char>(id)); }

  // Stateless: ids are the bytes.
  SymbolizerState ExportState() const override { return {}; }
  Status ImportState(const SymbolizerState& state) override {
    if (!state.keys.empty() || state.carry_bytes != 0) {
      return Error{"checkpoint holds symbolizer state single bytes never have"};
    }
    return Ok{};
  }

 private:
  Alphabet alphabet_ = Alphabet::Bytes(1);
};

// Non-overlapping n-byte blocks of the byte stream formed by all records in order: a block
// cut by the end of a record is completed by the next record's first bytes, so block
// boundaries fall where a block code over the concatenated capture would put them. At most
// `max_distinct` distinct blocks are kept (later new ones share the overflow id), so a sender
// of random bytes cannot grow the model without bound.
class BlockSymbolizer final : public Symbolizer {
 public:
  BlockSymbolizer(int block, uint32_t max_distinct)
      : alphabet_(Alphabet::Bytes(block)), block_(block), interner_(max_distinct) {}

  const Alphabet& alphabet() const override { return alphabet_; }

  size_t Append(std::string_view record, std::vector<SymbolId>& out) override {
    const auto* p = reinterpret_cast<const unsigned char*>(record.data());
    const auto* end = p + record.size();
    const size_t before = out.size();
    const auto block = static_cast<size_t>(block_);

    // Finish the block the previous record left open.
    while (pending_bytes_ > 0 && p != end) {
      pending_ = (pending_ << 8) | *p++;
      if (++pending_bytes_ == block_) {
        out.push_back(interner_.Intern(pending_));
        pending_ = 0;
        pending_bytes_ = 0;
      }
    }
    // Whole blocks, packed big-endian so the value reads like the key's hex form.
    while (static_cast<size_t>(end - p) >= block) {
      uint32_t value = 0;
      for (size_t i = 0; i < block; ++i) value = (value << 8) | p[i];
      out.push_back(interner_.Intern(value));
      p += block;
    }
    // Keep the tail for the next record.
    for (; p != end; ++p) {
      pending_ = (pending_ << 8) | *p;
      ++pending_bytes_;
    }
    return out.size() - before;
  }

  SymbolId IdLimit() const override { return interner_.IdLimit(); }

  SymbolizerState ExportState() const override {
    SymbolizerState state;
    // The overflow id needs no key: it is max_distinct again after a restore.
    for (SymbolId id = 0; id < interner_.size(); ++id) state.keys.push_back(KeyOf(id));
    state.carry = pending_;
    state.carry_bytes = static_cast<uint32_t>(pending_bytes_);
    return state;
  }

  Status ImportState(const SymbolizerState& state) override {
    const auto block = static_cast<size_t>(block_);
    if (state.carry_bytes >= block || (state.carry >> (8 * state.carry_bytes)) != 0) {
      return Error{"checkpoint holds an open block that does not fit the block size"};
    }
    if (state.keys.size() > interner_.max_distinct()) {
      return Error{"checkpoint holds more blocks than max_distinct"};
    }
    std::vector<uint32_t> values;
    values.reserve(state.keys.size());
    for (const SymbolKey& key : state.keys) {
      if (key.size() != block) return Error{"checkpoint holds a block key of the wrong size"};
      uint32_t value = 0;
      for (const char c : key) value = (value << 8) | static_cast<unsigned char>(c);
      values.push_back(value);
    }
    CappedValueInterner interner(interner_.max_distinct());
    if (!interner.Restore(values)) return Error{"checkpoint holds the same block key twice"};
    interner_ = std::move(interner);
    pending_ = static_cast<uint32_t>(state.carry);
    pending_bytes_ = static_cast<int>(state.carry_bytes);
    return Ok{};
  }

  SymbolKey KeyOf(SymbolId id) const override {
    if (interner_.IsOverflow(id)) return SymbolKey(kOverflowToken);
    const uint32_t value = interner_.ValueOf(id);
    SymbolKey key(static_cast<size_t>(block_), '\0');
    for (int i = block_ - 1, shift = 0; i >= 0; --i, shift += 8) {
      key[static_cast<size_t>(i)] = static_cast<char>((value >> shift) & 0xff);
    }
    return key;
  }

 private:
  Alphabet alphabet_;
  int block_;
  CappedValueInterner interner_;
  uint32_t pending_ = 0;   // bytes of the open block, packed big-endian
  int pending_bytes_ = 0;  // 0 .. block_ - 1
};

}  // namespace

std::unique_ptr<Symbolizer> MakeBytesSymbolizer(int block, const BytesOptions& options) {
  if (block == 1) return std::make_unique<SingleByteSymbolizer>();
  // Blocks of 2 have at most 2^16 values: all are kept, as for direct fields.
  const uint32_t max_distinct =
      block >= kMinCappedBlock ? options.max_distinct : ValueInterner::kNoLimit;
  if (block >= 2 && block <= 4) return std::make_unique<BlockSymbolizer>(block, max_distinct);
  return nullptr;
}

std::unique_ptr<Symbolizer> MakeBytesSymbolizer(int block) {
  return MakeBytesSymbolizer(block, BytesOptions{.max_distinct = ValueInterner::kNoLimit});
}

}  // namespace codedrift
