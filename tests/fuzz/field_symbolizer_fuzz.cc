// Fuzz target: the field symbolizer.
// Property: for any options (offset, width 1..32, byte order, transform) and any records, each
// symbol equals a bit-by-bit reference extraction of the field (then the delta mod 2^width or
// xor against the previous accepted record), every id lies below IdLimit() and maps back to its
// value through KeyOf, and a record too short for the field yields no symbol and counts as
// skipped.
#include <algorithm>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/symbolizer.h"

#include "fuzz_check.h"

namespace codedrift::fuzz {
namespace {

// Bit `i` of the record as a bit string: big endian numbers bits from the most significant bit
// of byte 0; little endian reads the record as one little-endian integer, bit 0 its least
// significant bit (symbolizer.h / field_symbolizer.cc).
int BitAt(std::string_view record, uint64_t i, FieldOrder order) {
  const auto byte = static_cast<unsigned char>(record[i / 8]);
  return order == FieldOrder::kBig ? (byte >> (7 - i % 8)) & 1 : (byte >> (i % 8)) & 1;
}

std::optional<uint64_t> ReferenceField(std::string_view record, const FieldOptions& options) {
  const uint64_t end = uint64_t{options.offset_bits} + static_cast<uint64_t>(options.width_bits);
  if (record.size() * 8 < end) return std::nullopt;
  uint64_t value = 0;
  for (int k = 0; k < options.width_bits; ++k) {
    const int bit = BitAt(record, options.offset_bits + k, options.order);
    if (options.order == FieldOrder::kBig) {
      value = (value << 1) | static_cast<uint64_t>(bit);  // first bit is the most significant
    } else {
      value |= static_cast<uint64_t>(bit) << k;  // first bit is the least significant
    }
  }
  return value;
}

}  // namespace
}  // namespace codedrift::fuzz

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  FuzzReader reader(data, size);
  FieldOptions options;
  options.offset_bits = reader.U16() % 512;
  options.width_bits = 1 + reader.Byte() % 32;
  const uint8_t flags = reader.Byte();
  options.order = (flags & 1) != 0 ? FieldOrder::kLittle : FieldOrder::kBig;
  options.transform = static_cast<FieldTransform>((flags >> 1) % 3);
  std::unique_ptr<Symbolizer> symbolizer = MakeFieldSymbolizer(options);
  FUZZ_CHECK(symbolizer != nullptr);
  FUZZ_CHECK(symbolizer->alphabet() == Alphabet::Field(options.width_bits));

  const uint64_t mask = (uint64_t{1} << options.width_bits) - 1;
  std::string_view rest = reader.Rest();
  uint64_t previous = 0;
  uint64_t skipped = 0;
  std::vector<SymbolId> symbols;
  while (!rest.empty()) {
    // One length byte, then the record: lengths up to 80 bytes reach every offset above.
    const size_t length =
        std::min<size_t>(static_cast<unsigned char>(rest.front()) % 81, rest.size() - 1);
    const std::string_view record = rest.substr(1, length);
    rest.remove_prefix(1 + length);

    symbols.clear();
    const size_t appended = symbolizer->Append(record, symbols);
    const std::optional<uint64_t> raw = ReferenceField(record, options);
    if (!raw) {
      ++skipped;
      FUZZ_CHECK(appended == 0 && symbols.empty());
      FUZZ_CHECK(symbolizer->skipped_records() == skipped);
      continue;
    }
    FUZZ_CHECK(appended == 1 && symbols.size() == 1);
    uint64_t expected = *raw;
    if (options.transform == FieldTransform::kDelta) expected = (*raw - previous) & mask;
    if (options.transform == FieldTransform::kXor) expected = *raw ^ previous;
    previous = *raw;
    FUZZ_CHECK(expected <= mask);
    FUZZ_CHECK(symbols[0] < symbolizer->IdLimit());
    FUZZ_CHECK(FieldValue(symbolizer->KeyOf(symbols[0])) == expected);
  }
  FUZZ_CHECK(symbolizer->skipped_records() == skipped);
  return 0;
}
