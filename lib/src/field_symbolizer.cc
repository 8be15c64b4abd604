// The `field` symbolizer: one bit field of each packet, optionally differenced against the
// previous packet's field, as one symbol per record.
#include <memory>
#include <vector>

#include "codedrift/symbolizer.h"

#include "value_interner.h"

namespace codedrift {
namespace {

// Fields up to kMaxDirectFieldWidth bits use the value itself as the id (a counting array of
// at most 64 Ki entries); wider fields intern values so arrays grow only with the values
// actually seen, and at most max_distinct of them, so a sender of random values cannot grow
// the model without bound.
class FieldSymbolizer final : public Symbolizer {
 public:
  explicit FieldSymbolizer(const FieldOptions& options)
      : options_(options),
        alphabet_(Alphabet::Field(options.width_bits)),
        direct_(options.width_bits <= kMaxDirectFieldWidth),
        mask_((uint64_t{1} << options.width_bits) - 1),
        first_byte_(options.offset_bits / 8),
        byte_count_((options.offset_bits % 8 + static_cast<uint64_t>(options.width_bits) + 7) / 8),
        interner_(options.max_distinct) {}

  const Alphabet& alphabet() const override { return alphabet_; }

  size_t Append(std::string_view record, std::vector<SymbolId>& out) override {
    if (record.size() < first_byte_ + byte_count_) {
      ++skipped_;
      return 0;
    }
    const uint64_t raw = Extract(record);
    uint64_t value = raw;
    switch (options_.transform) {
      case FieldTransform::kNone:
        break;
      case FieldTransform::kDelta:
        value = (raw - previous_) & mask_;  // unsigned wrap-around is the mod 2^width delta
        break;
      case FieldTransform::kXor:
        value = raw ^ previous_;
        break;
    }
    previous_ = raw;
    out.push_back(direct_ ? static_cast<SymbolId>(value)
                          : interner_.Intern(static_cast<uint32_t>(value)));
    return 1;
  }

  SymbolId IdLimit() const override {
    return direct_ ? SymbolId{1} << options_.width_bits : interner_.IdLimit();
  }

  SymbolKey KeyOf(SymbolId id) const override {
    if (direct_) return FieldKey(id);
    if (interner_.IsOverflow(id)) return SymbolKey(kOverflowToken);
    return FieldKey(interner_.ValueOf(id));
  }

  uint64_t skipped_records() const override { return skipped_; }

  SymbolizerState ExportState() const override {
    SymbolizerState state;
    // The overflow id needs no key: it is max_distinct again after a restore.
    if (!direct_) {
      for (SymbolId id = 0; id < interner_.size(); ++id) state.keys.push_back(KeyOf(id));
    }
    state.carry = previous_;
    state.skipped_records = skipped_;
    return state;
  }

  Status ImportState(const SymbolizerState& state) override {
    if (state.carry > mask_ || state.carry_bytes != 0) {
      return Error{"checkpoint holds a previous field value wider than the field"};
    }
    if (direct_ && !state.keys.empty()) {
      return Error{"checkpoint holds keys for a field whose ids are its values"};
    }
    if (state.keys.size() > options_.max_distinct) {
      return Error{"checkpoint holds more field values than max_distinct"};
    }
    std::vector<uint32_t> values;
    values.reserve(state.keys.size());
    for (const SymbolKey& key : state.keys) {
      if (key.size() != 8 || FieldValue(key) > mask_) {
        return Error{"checkpoint holds a field key outside the field's range"};
      }
      values.push_back(static_cast<uint32_t>(FieldValue(key)));
    }
    CappedValueInterner interner(options_.max_distinct);
    if (!interner.Restore(values)) return Error{"checkpoint holds the same field key twice"};
    interner_ = std::move(interner);
    previous_ = state.carry;
    skipped_ = state.skipped_records;
    return Ok{};
  }

 private:
  // Bit numbering.
  //  big endian: the packet is one bit string, most significant bit of byte 0 first (network
  //    order); the field is bits offset .. offset + width - 1 of that string, its first bit
  //    the value's most significant bit.
  //  little endian: the bytes are read as one little-endian integer P = sum byte[i] 256^i, and
  //    the field is (P >> offset) mod 2^width, i.e. offset 0 is the least significant bit of
  //    byte 0 and the value's least significant bit comes first.
  // A field of at most 32 bits at any bit offset spans at most 5 bytes, so 64 bits suffice.
  uint64_t Extract(std::string_view record) const {
    const auto* bytes = reinterpret_cast<const unsigned char*>(record.data()) + first_byte_;
    const unsigned in_byte_offset = options_.offset_bits % 8;
    uint64_t window = 0;
    if (options_.order == FieldOrder::kBig) {
      for (size_t i = 0; i < byte_count_; ++i) window = (window << 8) | bytes[i];
      const auto shift =
          8 * byte_count_ - in_byte_offset - static_cast<size_t>(options_.width_bits);
      return (window >> shift) & mask_;
    }
    for (size_t i = 0; i < byte_count_; ++i) window |= uint64_t{bytes[i]} << (8 * i);
    return (window >> in_byte_offset) & mask_;
  }

  FieldOptions options_;
  Alphabet alphabet_;
  bool direct_;  // ids are the values
  uint64_t mask_;
  size_t first_byte_;
  size_t byte_count_;
  uint64_t previous_ = 0;  // raw value of the last accepted record; 0 before the first
  uint64_t skipped_ = 0;
  CappedValueInterner interner_;  // wide fields only
};

}  // namespace

std::unique_ptr<Symbolizer> MakeFieldSymbolizer(const FieldOptions& options) {
  if (options.width_bits < 1 || options.width_bits > 32) return nullptr;
  return std::make_unique<FieldSymbolizer>(options);
}

}  // namespace codedrift
