// Test helper: reads one DEFLATE block (RFC 1951) far enough to recover a dynamic block's code
// lengths, and decodes literal-only blocks (what zlib's Z_HUFFMAN_ONLY strategy writes) so the
// recovered lengths can be proven right. Written from the RFC; deliberately independent of the
// library's canonical-code builder. Plain values, no shared state.
#pragma once

#include <array>
#include <cstdint>
#include <span>
#include <string>
#include <vector>

#include "codedrift/result.h"

namespace codedrift::deflate_test {

// Reads bits in RFC 1951 section 3.1.1 order: data elements least significant bit first.
class BitReader {
 public:
  explicit BitReader(std::span<const uint8_t> bytes) : bytes_(bytes) {}

  // The next `count` (0..24) bits as a number, or false at the end of the input.
  bool Read(int count, uint32_t* value) {
    uint32_t out = 0;
    for (int i = 0; i < count; ++i) {
      if (position_ >= 8 * bytes_.size()) return false;
      const uint32_t bit = (bytes_[position_ / 8] >> (position_ % 8)) & 1u;
      out |= bit << i;
      ++position_;
    }
    *value = out;
    return true;
  }

  size_t position() const { return position_; }  // bits consumed so far

 private:
  std::span<const uint8_t> bytes_;
  size_t position_ = 0;
};

// Decodes one canonical Huffman code given its lengths (RFC 1951 section 3.2.2). Codes of one
// length are consecutive numbers, so reading a code bit by bit (most significant first, RFC
// 1951 section 3.1.1) and comparing with the first code of each length finds the symbol.
class CanonicalDecoder {
 public:
  explicit CanonicalDecoder(std::span<const int> lengths) {
    for (int length : lengths) {
      if (length > 0 && length <= kMaxBits) ++count_[length];
    }
    for (int length = 1; length <= kMaxBits; ++length) {
      for (size_t symbol = 0; symbol < lengths.size(); ++symbol) {
        if (lengths[symbol] == length) symbols_.push_back(static_cast<int>(symbol));
      }
    }
  }

  bool Decode(BitReader& reader, int* symbol) const {
    int code = 0;   // the bits read so far
    int first = 0;  // the first code of the current length
    int index = 0;  // where that length's symbols start in symbols_
    for (int length = 1; length <= kMaxBits; ++length) {
      uint32_t bit = 0;
      if (!reader.Read(1, &bit)) return false;
      code |= static_cast<int>(bit);
      if (code - first < count_[length]) {
        *symbol = symbols_[index + code - first];
        return true;
      }
      index += count_[length];
      first = (first + count_[length]) << 1;
      code <<= 1;
    }
    return false;  // no codeword matches: the lengths do not describe this stream
  }

 private:
  static constexpr int kMaxBits = 15;  // RFC 1951 section 3.2.7: no code is longer
  std::array<int, kMaxBits + 1> count_{};
  std::vector<int> symbols_;  // by length, then by symbol: the canonical order
};

struct BlockStart {
  bool final_block = false;
  int type = 0;  // RFC 1951 section 3.2.3 BTYPE: 0 stored, 1 fixed, 2 dynamic
};

inline Result<BlockStart> ReadBlockStart(BitReader& reader) {
  uint32_t final_bit = 0;
  uint32_t type = 0;
  if (!reader.Read(1, &final_bit) || !reader.Read(2, &type)) return Error{"truncated block"};
  return BlockStart{final_bit == 1, static_cast<int>(type)};
}

// What a dynamic block header says (RFC 1951 section 3.2.7).
struct DynamicHeader {
  std::vector<int> literal_lengths;   // HLIT + 257 entries; symbols past them have length 0
  std::vector<int> distance_lengths;  // HDIST + 1 entries
  size_t end_bit = 0;                 // reader position just after the header
};

// Reads a dynamic header; the reader must be just past BTYPE.
inline Result<DynamicHeader> ReadDynamicHeader(BitReader& reader) {
  uint32_t hlit = 0;
  uint32_t hdist = 0;
  uint32_t hclen = 0;
  if (!reader.Read(5, &hlit) || !reader.Read(5, &hdist) || !reader.Read(4, &hclen)) {
    return Error{"truncated header counts"};
  }
  // RFC 1951 section 3.2.7: code length code lengths, 3 bits each, in this order.
  static constexpr int kOrder[19] = {16, 17, 18, 0, 8,  7, 9,  6, 10, 5,
                                     11, 4,  12, 3, 13, 2, 14, 1, 15};
  std::vector<int> length_code_lengths(19, 0);
  for (uint32_t i = 0; i < hclen + 4; ++i) {
    uint32_t length = 0;
    if (!reader.Read(3, &length)) return Error{"truncated code length code"};
    length_code_lengths[kOrder[i]] = static_cast<int>(length);
  }
  const CanonicalDecoder length_decoder(length_code_lengths);

  // Literal/length and distance lengths form one sequence; repeats may cross between them.
  const size_t total = (hlit + 257) + (hdist + 1);
  std::vector<int> lengths;
  while (lengths.size() < total) {
    int symbol = 0;
    if (!length_decoder.Decode(reader, &symbol)) return Error{"bad code length symbol"};
    uint32_t extra = 0;
    if (symbol < 16) {
      lengths.push_back(symbol);
      continue;
    }
    int repeat = 0;
    int value = 0;
    if (symbol == 16) {  // copy the previous length 3..6 times
      if (lengths.empty() || !reader.Read(2, &extra)) return Error{"bad repeat (16)"};
      repeat = 3 + static_cast<int>(extra);
      value = lengths.back();
    } else if (symbol == 17) {  // 3..10 zeros
      if (!reader.Read(3, &extra)) return Error{"truncated repeat (17)"};
      repeat = 3 + static_cast<int>(extra);
    } else {  // 18: 11..138 zeros
      if (!reader.Read(7, &extra)) return Error{"truncated repeat (18)"};
      repeat = 11 + static_cast<int>(extra);
    }
    if (lengths.size() + static_cast<size_t>(repeat) > total) return Error{"repeat overruns"};
    lengths.insert(lengths.end(), static_cast<size_t>(repeat), value);
  }
  DynamicHeader header;
  header.literal_lengths.assign(lengths.begin(), lengths.begin() + (hlit + 257));
  header.distance_lengths.assign(lengths.begin() + (hlit + 257), lengths.end());
  header.end_bit = reader.position();
  return header;
}

// Decodes the block's data after the header: literals until end-of-block (symbol 256). Length
// symbols (257 and up) are reported as errors: a Huffman-only stream never contains them.
inline Result<std::vector<uint8_t>> DecodeLiterals(BitReader& reader,
                                                   std::span<const int> literal_lengths) {
  const CanonicalDecoder decoder(literal_lengths);
  std::vector<uint8_t> out;
  while (true) {
    int symbol = 0;
    if (!decoder.Decode(reader, &symbol)) return Error{"bad literal/length code"};
    if (symbol == 256) return out;
    if (symbol > 256) return Error{"length symbol " + std::to_string(symbol)};
    out.push_back(static_cast<uint8_t>(symbol));
  }
}

}  // namespace codedrift::deflate_test
