// Counting a capture's symbols for `train` and `inspect`: the order-1 histogram (whole stream
// and its two halves) and the block counts of the orders asked for.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <set>

#include "codedrift/alphabet.h"
#include "codedrift/result.h"
#include "codedrift/symbol_counts.h"
#include "codedrift/symbolizer.h"

#include "capture_reader.h"
#include "progress.h"

namespace codedrift::cli {

// What the stream's symbols are: bytes (n-byte blocks for block > 1) or tokens of lines.
struct SymbolSource {
  Alphabet alphabet = Alphabet::Bytes();
  TokenOptions tokens;  // used for tokens only
  BytesOptions bytes;   // used for bytes blocks of 3..4 only
};

// Block counts of one order n: N_n blocks of n symbols, K_n distinct, plug-in H(S^n) in bits
// per block (divide by n for bits per symbol).
struct OrderCounts {
  uint64_t blocks = 0;
  uint64_t distinct = 0;
  double block_entropy_bits = 0;
};

// Everything counted in one pass. Plain value type.
struct StreamCounts {
  uint64_t bytes = 0;
  SymbolCounts all{Alphabet::Bytes()};
  SymbolCounts older{Alphabet::Bytes()};  // the stream's first half (by bytes)
  SymbolCounts newer{Alphabet::Bytes()};  // the rest
  std::map<int, OrderCounts> orders;      // every order asked for, 1 included
};

// Counts the stream. `orders` lists the block orders wanted (1..4; 1 is always done). For
// bytes the halves split at the middle byte (rounded down to even); for tokens after the line
// that holds the last byte of the first half. With `threads` > 1, single bytes and tokens
// (inputs of 1 MiB and more) count their two halves on two threads, and the other symbolizer
// passes count on a second thread while the first symbolizes; the counts are the same either
// way. `progress` may be null.
Result<StreamCounts> CountStream(const CaptureStream& stream, const SymbolSource& source,
                                 const std::set<int>& orders, int threads, Progress* progress);

}  // namespace codedrift::cli
