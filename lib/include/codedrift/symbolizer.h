// Symbolizers turn records into symbols. They are called once per record (never per symbol),
// and number symbols densely so hot paths count into arrays.
#pragma once

#include <cstdint>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/result.h"

namespace codedrift {

using SymbolId = uint32_t;

struct TokenOptions {
  std::string delimiters = " =,";
  bool mask_digits = false;       // every ASCII digit becomes '0' before lookup
  uint32_t max_distinct = 65536;  // distinct tokens kept; later new tokens share the overflow id
};

enum class FieldOrder { kBig, kLittle };
enum class FieldTransform { kNone, kDelta, kXor };

struct FieldOptions {
  uint32_t offset_bits = 0;
  int width_bits = 8;  // 1..32
  FieldOrder order = FieldOrder::kBig;
  FieldTransform transform = FieldTransform::kNone;  // against the previous record's value
  // Fields wider than kMaxDirectFieldWidth bits: distinct values kept; later new values share
  // the overflow id (key kOverflowToken). Narrower fields have ids for all values: unused.
  uint32_t max_distinct = 65536;
};

// Options of the `bytes` symbolizer besides its block size.
struct BytesOptions {
  // Blocks of kMinCappedBlock bytes or more: distinct blocks kept; later new blocks share the
  // overflow id (key kOverflowToken). Smaller blocks have ids for all values: unused.
  uint32_t max_distinct = 65536;
};

// What a symbolizer carries from record to record, for checkpoints.
struct SymbolizerState {
  // Keys the symbolizer numbered itself, in id order (token texts from id 2 on, byte blocks
  // and wide field values from id 0); empty for symbolizers whose ids are the values.
  std::vector<SymbolKey> keys;
  uint64_t carry = 0;        // byte blocks: the open block's bytes; field: the previous value
  uint32_t carry_bytes = 0;  // byte blocks: bytes in the open block
  uint64_t skipped_records = 0;
};

// Turns records into dense symbol ids and ids back into keys. Stateful (blocks carry across
// records, field deltas need the previous record): one instance per model. Not thread-safe.
class Symbolizer {
 public:
  virtual ~Symbolizer() = default;
  virtual const Alphabet& alphabet() const = 0;
  // Appends the record's symbols to `out`. Returns the number of symbols appended.
  virtual size_t Append(std::string_view record, std::vector<SymbolId>& out) = 0;
  // Upper bound (exclusive) on ids handed out so far; counting arrays of this size suffice.
  virtual SymbolId IdLimit() const = 0;
  virtual SymbolKey KeyOf(SymbolId id) const = 0;
  // Records too short for a field, etc. (counted by the caller as rejected).
  virtual uint64_t skipped_records() const { return 0; }

  // Checkpoints (never on the hot path): what to save, and taking it over in a fresh
  // symbolizer with the same options, which then hands out the same ids for the same keys.
  // Import refuses keys that this symbolizer could not have produced (wrong size, out of
  // range, duplicates, more than max_distinct).
  virtual SymbolizerState ExportState() const { return {}; }
  virtual Status ImportState(const SymbolizerState& /*state*/) {
    return Error{"this symbolizer cannot be restored from a checkpoint"};
  }
};

// bytes (block 1: id = byte value), bytes blocks (id = big-endian packed n bytes; a partial
// block at the end waits for the next record), tokens, field.
// Ids: bytes block 1 and fields of width <= 16 use the value itself (IdLimit 256, 2^width);
// byte blocks of 2..4 and wider fields number values densely in order of first appearance.
// Byte blocks of 3..4 and fields wider than 16 bits keep at most max_distinct values: ids
// 0 .. max_distinct - 1 are values, and id max_distinct is the overflow symbol
// (kOverflowToken) that every later new value maps to; IdLimit reaches max_distinct + 1 once
// the table is full, whether or not the overflow id has been handed out yet.
// Tokens: id 0 is end of record (kEndOfRecordToken), id 1 the overflow symbol
// (kOverflowToken), tokens from 2 on; a record's trailing "\n" or "\r\n" is not a token and a
// newline inside a record always delimits. Options outside their documented range (block
// not 1..4, width_bits not 1..32) give nullptr: validate configs before calling.
// MakeBytesSymbolizer(block) keeps every distinct block (no cap): for offline passes whose
// memory its input bounds anyway. The daemon passes BytesOptions.
std::unique_ptr<Symbolizer> MakeBytesSymbolizer(int block = 1);
std::unique_ptr<Symbolizer> MakeBytesSymbolizer(int block, const BytesOptions& options);
std::unique_ptr<Symbolizer> MakeTokenSymbolizer(const TokenOptions& options);
std::unique_ptr<Symbolizer> MakeFieldSymbolizer(const FieldOptions& options);

}  // namespace codedrift
