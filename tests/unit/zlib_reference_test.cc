// zlib (Debian zlib1g-dev 1.2.13) as an outside reference Huffman coder, used as REFERENCES.md
// describes: Huffman-only deflate of at most 32,766 bytes gives one dynamic block whose header
// carries zlib's literal/length code lengths.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include <gtest/gtest.h>
#include <zlib.h>

#include "codedrift/huffman.h"

#include "deflate_block.h"

namespace codedrift {
namespace {

using deflate_test::BitReader;

constexpr int kEndOfBlock = 256;
constexpr size_t kMaxOneBlockBytes = 32766;  // REFERENCES.md: N <= 32766 -> one block
constexpr int kDeflateMaxLength = 15;        // RFC 1951 section 3.2.7

// Huffman-only raw deflate, exactly as REFERENCES.md gives it.
std::vector<uint8_t> DeflateHuffmanOnly(const std::vector<uint8_t>& input) {
  z_stream zs{};
  EXPECT_EQ(deflateInit2(&zs, 9, Z_DEFLATED, -15, 9, Z_HUFFMAN_ONLY), Z_OK);
  std::vector<uint8_t> out(deflateBound(&zs, input.size()) + 64);
  zs.next_in = const_cast<Bytef*>(input.data());
  zs.avail_in = static_cast<uInt>(input.size());
  zs.next_out = out.data();
  zs.avail_out = static_cast<uInt>(out.size());
  EXPECT_EQ(deflate(&zs, Z_FINISH), Z_STREAM_END);
  out.resize(zs.total_out);
  deflateEnd(&zs);
  return out;
}

// zlib's own raw inflate, as a second opinion on the stream.
std::vector<uint8_t> InflateRaw(const std::vector<uint8_t>& compressed, size_t expected_size) {
  z_stream zs{};
  EXPECT_EQ(inflateInit2(&zs, -15), Z_OK);
  std::vector<uint8_t> out(expected_size + 16);
  zs.next_in = const_cast<Bytef*>(compressed.data());
  zs.avail_in = static_cast<uInt>(compressed.size());
  zs.next_out = out.data();
  zs.avail_out = static_cast<uInt>(out.size());
  EXPECT_EQ(inflate(&zs, Z_FINISH), Z_STREAM_END);
  out.resize(zs.total_out);
  inflateEnd(&zs);
  return out;
}

// Invented data: counts[b] copies of byte b, in a seeded random order.
std::vector<uint8_t> BytesWithCounts(const std::vector<uint64_t>& counts, uint64_t seed) {
  std::vector<uint8_t> bytes;
  for (size_t b = 0; b < counts.size(); ++b) bytes.insert(bytes.end(), counts[b], uint8_t(b));
  std::mt19937_64 rng(seed);
  std::shuffle(bytes.begin(), bytes.end(), rng);
  return bytes;
}

// What zlib made of one input: its code lengths, proven by decoding the block with them.
struct ZlibCode {
  std::vector<int> lengths;  // 257 entries: bytes, then end-of-block
  size_t header_bits = 0;    // block header: 3 block bits + the dynamic header
  size_t output_bytes = 0;
};

ZlibCode RunZlib(const std::vector<uint8_t>& input) {
  ZlibCode code;
  const std::vector<uint8_t> compressed = DeflateHuffmanOnly(input);
  code.output_bytes = compressed.size();
  BitReader reader(compressed);
  auto start = deflate_test::ReadBlockStart(reader);
  EXPECT_TRUE(start.ok());
  if (!start.ok()) return code;
  EXPECT_TRUE(start.value().final_block);
  EXPECT_EQ(start.value().type, 2) << "zlib chose a non-dynamic block";
  if (start.value().type != 2) return code;
  auto header = deflate_test::ReadDynamicHeader(reader);
  EXPECT_TRUE(header.ok()) << header.error().message;
  if (!header.ok()) return code;
  code.header_bits = header.value().end_bit;
  code.lengths = header.value().literal_lengths;
  code.lengths.resize(kEndOfBlock + 1);  // lengths past HLIT are 0; 257+ unused here
  // Proof of the parser: the lengths decode the block back to the input, and zlib's inflate
  // agrees; the block ends exactly at the padding of the last byte.
  auto decoded = deflate_test::DecodeLiterals(reader, header.value().literal_lengths);
  EXPECT_TRUE(decoded.ok()) << decoded.error().message;
  if (decoded.ok()) {
    EXPECT_EQ(decoded.value(), input);
  }
  EXPECT_EQ((reader.position() + 7) / 8, compressed.size());
  EXPECT_EQ(InflateRaw(compressed, input.size()), input);
  return code;
}

std::vector<uint64_t> WithEndOfBlock(const std::vector<uint64_t>& byte_counts) {
  std::vector<uint64_t> weights = byte_counts;
  weights.resize(kEndOfBlock + 1, 0);
  weights[kEndOfBlock] = 1;  // REFERENCES.md: zlib always codes one end-of-block symbol
  return weights;
}

double EntropyBits(const std::vector<uint64_t>& counts) {
  double total = 0;
  for (uint64_t count : counts) total += static_cast<double>(count);
  double bits = 0;
  for (uint64_t count : counts) {
    if (count > 0) bits -= (count / total) * std::log2(count / total);
  }
  return bits;
}

int MaxLength(const std::vector<int>& lengths) {
  return *std::max_element(lengths.begin(), lengths.end());
}

struct Comparison {
  bool binds = false;  // the unrestricted optimum needs more than 15 bits somewhere
  uint64_t limited_cost = 0;
  uint64_t zlib_cost = 0;
};

// Checks every relation REFERENCES.md lists between zlib's code and ours on one count vector.
Comparison CheckAgainstZlib(const std::vector<uint64_t>& byte_counts, uint64_t seed) {
  const std::vector<uint8_t> input = BytesWithCounts(byte_counts, seed);
  EXPECT_LE(input.size(), kMaxOneBlockBytes);
  const ZlibCode zlib = RunZlib(input);
  if (zlib.lengths.empty()) return {};
  const std::vector<uint64_t> weights = WithEndOfBlock(byte_counts);
  const uint64_t zlib_cost = CodeCostBits(weights, zlib.lengths);  // data bits + end-of-block
  EXPECT_LE(MaxLength(zlib.lengths), kDeflateMaxLength);           // RFC 1951 section 3.2.7

  const std::vector<int> huffman = HuffmanLengths(weights);
  const uint64_t optimal = CodeCostBits(weights, huffman);
  auto limited = LimitedHuffmanLengths(weights, kDeflateMaxLength);
  EXPECT_TRUE(limited.ok());
  const uint64_t limited_cost = CodeCostBits(weights, limited.value());
  const bool binds = MaxLength(huffman) > kDeflateMaxLength;
  if (!binds) {
    // REFERENCES.md: zlib's cost equals the optimal Huffman cost when no length above 15 is
    // needed (costs, not length vectors: ties may differ).
    EXPECT_EQ(zlib_cost, optimal) << "seed " << seed;
    EXPECT_EQ(limited_cost, optimal);
  } else {
    // REFERENCES.md: when the limit binds, optimal unrestricted <= optimal 15-limited <= zlib's
    // heuristic.
    EXPECT_LE(optimal, limited_cost) << "seed " << seed;
    EXPECT_LE(limited_cost, zlib_cost) << "seed " << seed;
  }
  // Gibbs' inequality (Cover & Thomas, Theorem 2.6.3, from memory): any code meeting Kraft
  // spends at least N * H bits on the data.
  const uint64_t data_bits = zlib_cost - static_cast<uint64_t>(zlib.lengths[kEndOfBlock]);
  const double n = static_cast<double>(input.size());
  EXPECT_GE(static_cast<double>(data_bits), n * EntropyBits(byte_counts) * (1 - 1e-12));
  // REFERENCES.md: the output size is predictable to the byte: header, data, end-of-block,
  // padded to a whole byte.
  EXPECT_EQ(zlib.output_bytes, (zlib.header_bits + zlib_cost + 7) / 8) << "seed " << seed;
  return {binds, limited_cost, zlib_cost};
}

// Invented skewed counts: a Zipf-like profile with a random exponent over a random subset of
// byte values, scaled to a random total that fits one block.
std::vector<uint64_t> RandomCounts(std::mt19937_64& rng) {
  std::vector<uint64_t> counts(256, 0);
  std::vector<int> order(256);
  for (int i = 0; i < 256; ++i) order[i] = i;
  std::shuffle(order.begin(), order.end(), rng);
  const int used = 2 + static_cast<int>(rng() % 255);
  const double exponent = 0.3 + static_cast<double>(rng() % 2000) / 1000.0;
  const double total = 500 + static_cast<double>(rng() % 30000);
  double norm = 0;
  for (int r = 1; r <= used; ++r) norm += std::pow(r, -exponent);
  uint64_t sum = 0;
  for (int r = 1; r <= used; ++r) {
    const uint64_t count = 1 + static_cast<uint64_t>(total * std::pow(r, -exponent) / norm);
    counts[order[r - 1]] = count;
    sum += count;
  }
  while (sum > kMaxOneBlockBytes) {  // trim the largest count if rounding overshot
    auto largest = std::max_element(counts.begin(), counts.end());
    const uint64_t cut = std::min<uint64_t>(*largest - 1, sum - kMaxOneBlockBytes);
    *largest -= cut;
    sum -= cut;
  }
  return counts;
}

TEST(ZlibReference, ParserRecoversZlibLengths) {
  // The parser's proof on its own: text-like and flat inputs decode back exactly.
  std::vector<uint64_t> counts(256, 0);
  for (int b = 'a'; b <= 'z'; ++b) counts[b] = 40 + 13 * (b - 'a');
  counts[' '] = 900;
  const ZlibCode letters = RunZlib(BytesWithCounts(counts, 1));
  EXPECT_EQ(letters.lengths.size(), 257u);
  EXPECT_GT(letters.lengths[' '], 0);
  EXPECT_EQ(letters.lengths['A'], 0);  // absent bytes get no codeword
  // 200 equally likely bytes plus end-of-block: lengths 7, 8 and 9 only.
  std::vector<uint64_t> flat_counts(256, 0);
  std::fill(flat_counts.begin(), flat_counts.begin() + 200, 100);
  const ZlibCode flat = RunZlib(BytesWithCounts(flat_counts, 2));
  EXPECT_EQ(flat.lengths.size(), 257u);
  EXPECT_LE(MaxLength(flat.lengths), 9);
}

TEST(ZlibReference, OptimalCostMatchesZlibOnRandomSources) {
  std::mt19937_64 rng(1951);
  int binding = 0;
  int unbound = 0;
  for (int trial = 0; trial < 60; ++trial) {
    const std::vector<uint64_t> counts = RandomCounts(rng);
    (CheckAgainstZlib(counts, 1000 + trial).binds ? binding : unbound)++;
  }
  EXPECT_GT(unbound, 30);  // the equality case must be the one mostly exercised
}

TEST(ZlibReference, FifteenBitLimitBinds) {
  // Invented counts growing faster than Fibonacci (c[k] = c[k-1] + c[k-2] + 1), so every
  // optimal code is a chain deeper than 15 bits; 18 and 19 symbols still fit in one block.
  std::mt19937_64 rng(15);
  int binding = 0;
  int zlib_worse = 0;
  for (int symbols : {17, 18, 19}) {
    for (int variant = 0; variant < 4; ++variant) {
      std::vector<uint64_t> counts(256, 0);
      std::vector<int> order(256);
      for (int i = 0; i < 256; ++i) order[i] = i;
      std::shuffle(order.begin(), order.end(), rng);
      uint64_t a = 1;
      uint64_t b = 2;
      for (int k = 0; k < symbols; ++k) {
        counts[order[k]] = a;
        const uint64_t next = a + b + 1;
        a = b;
        b = next;
      }
      if (variant > 0) counts[order[symbols]] = 1 + rng() % 3;  // a few more rare symbols
      if (variant > 1) counts[order[symbols + 1]] = 1 + rng() % 3;
      const std::vector<int> huffman = HuffmanLengths(WithEndOfBlock(counts));
      ASSERT_GT(MaxLength(huffman), kDeflateMaxLength) << symbols;
      const Comparison result = CheckAgainstZlib(counts, 7 * symbols + variant);
      binding += result.binds;
      zlib_worse += result.zlib_cost > result.limited_cost;
    }
  }
  EXPECT_EQ(binding, 12);
  // REFERENCES.md: zlib's length limiting is a heuristic, not always optimal. Here it loses
  // to package-merge on most inputs (10 of the 12 when this was written).
  EXPECT_GT(zlib_worse, 0);
}

TEST(ZlibReference, FibonacciObservation) {
  // REFERENCES.md (observed): counts 1, 1, 2, 3, 5, ..., 6765 (20 Fibonacci numbers) -> zlib
  // cost 46365 bits, equal to the optimal Huffman cost with end-of-block.
  std::vector<uint64_t> counts(256, 0);
  uint64_t a = 1;
  uint64_t b = 1;
  for (int k = 0; k < 20; ++k) {
    counts['A' + k] = a;
    const uint64_t next = a + b;
    a = b;
    b = next;
  }
  ASSERT_EQ(counts['A' + 19], 6765u);
  const std::vector<uint8_t> input = BytesWithCounts(counts, 20);
  const ZlibCode zlib = RunZlib(input);
  const std::vector<uint64_t> weights = WithEndOfBlock(counts);
  EXPECT_EQ(CodeCostBits(weights, zlib.lengths), 46365u);
  EXPECT_EQ(CodeCostBits(weights, HuffmanLengths(weights)), 46365u);
  CheckAgainstZlib(counts, 20);
}

TEST(ZlibReference, BlockChoiceObservations) {
  // REFERENCES.md (observed): zlib picks a fixed block for a 43-byte English sentence ...
  const std::string sentence = "The quick brown fox jumps over the lazy dog";
  ASSERT_EQ(sentence.size(), 43u);
  const std::vector<uint8_t> fixed_out =
      DeflateHuffmanOnly(std::vector<uint8_t>(sentence.begin(), sentence.end()));
  BitReader fixed_reader(fixed_out);
  auto fixed_start = deflate_test::ReadBlockStart(fixed_reader);
  ASSERT_TRUE(fixed_start.ok());
  EXPECT_EQ(fixed_start.value().type, 1);
  // ... and a stored block for 20,000 uniformly random bytes, n + 5 bytes long.
  std::mt19937_64 rng(20000);
  std::vector<uint8_t> noise(20000);
  for (uint8_t& byte : noise) byte = static_cast<uint8_t>(rng());
  const std::vector<uint8_t> stored_out = DeflateHuffmanOnly(noise);
  BitReader stored_reader(stored_out);
  auto stored_start = deflate_test::ReadBlockStart(stored_reader);
  ASSERT_TRUE(stored_start.ok());
  EXPECT_EQ(stored_start.value().type, 0);
  EXPECT_EQ(stored_out.size(), noise.size() + 5);
}

}  // namespace
}  // namespace codedrift
