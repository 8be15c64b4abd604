// Byte-level pieces of the checkpoint format: LEB128 varints, little-endian fixed integers,
// IEEE doubles and length-prefixed strings, written to a string and read back with every
// length checked against the bytes left.
#pragma once

#include <bit>
#include <cstdint>
#include <cstring>
#include <string>
#include <string_view>

namespace codedrift {

// Appends to a string it does not own. Not thread-safe.
class ByteWriter {
 public:
  explicit ByteWriter(std::string& out) : out_(out) {}

  void Varint(uint64_t value) {
    while (value >= 0x80) {
      out_ += static_cast<char>((value & 0x7f) | 0x80);
      value >>= 7;
    }
    out_ += static_cast<char>(value);
  }
  // Signed values (steady times may be negative after a shift), zigzag-mapped.
  void Signed(int64_t value) {
    Varint((static_cast<uint64_t>(value) << 1) ^ static_cast<uint64_t>(value >> 63));
  }
  void Fixed32(uint32_t value) { FixedBytes(value, 4); }
  void Fixed64(uint64_t value) { FixedBytes(value, 8); }
  void Double(double value) { Fixed64(std::bit_cast<uint64_t>(value)); }
  void Byte(uint8_t value) { out_ += static_cast<char>(value); }
  void Bytes(std::string_view bytes) {
    Varint(bytes.size());
    out_ += bytes;
  }

 private:
  void FixedBytes(uint64_t value, int count) {
    for (int i = 0; i < count; ++i) out_ += static_cast<char>((value >> (8 * i)) & 0xff);
  }

  std::string& out_;
};

// Reads from a view it does not own. After the first failure every read fails and returns
// zero values, so a decoder can read a whole section and check ok() once. Not thread-safe.
class ByteReader {
 public:
  explicit ByteReader(std::string_view in) : in_(in) {}

  bool ok() const { return ok_; }
  bool done() const { return at_ == in_.size(); }
  size_t left() const { return in_.size() - at_; }
  // Marks the input bad (a value out of range found by the caller).
  void Fail() { ok_ = false; }

  uint64_t Varint() {
    uint64_t value = 0;
    for (int shift = 0; shift < 64; shift += 7) {
      if (!Need(1)) return 0;
      const auto byte = static_cast<uint8_t>(in_[at_++]);
      if (shift == 63 && byte > 1) break;  // more than 64 bits
      value |= uint64_t{byte & 0x7fu} << shift;
      if ((byte & 0x80) == 0) return value;
    }
    ok_ = false;
    return 0;
  }
  int64_t Signed() {
    const uint64_t raw = Varint();
    return static_cast<int64_t>((raw >> 1) ^ (~(raw & 1) + 1));
  }
  uint32_t Fixed32() { return static_cast<uint32_t>(FixedBytes(4)); }
  uint64_t Fixed64() { return FixedBytes(8); }
  double Double() { return std::bit_cast<double>(Fixed64()); }
  uint8_t Byte() { return Need(1) ? static_cast<uint8_t>(in_[at_++]) : 0; }
  std::string_view Bytes() {
    const uint64_t size = Varint();
    if (!Need(size)) return {};
    const std::string_view out = in_.substr(at_, size);
    at_ += size;
    return out;
  }
  // A count of items that take at least `min_item_bytes` each: never more than the bytes left
  // allow, so a corrupt count cannot make a decoder allocate more than the input's size.
  uint64_t Count(size_t min_item_bytes = 1) {
    const uint64_t count = Varint();
    if (min_item_bytes > 0 && count > left() / min_item_bytes) ok_ = false;
    return ok_ ? count : 0;
  }

 private:
  bool Need(uint64_t bytes) {
    if (ok_ && bytes <= left()) return true;
    ok_ = false;
    return false;
  }
  uint64_t FixedBytes(int count) {
    if (!Need(static_cast<uint64_t>(count))) return 0;
    uint64_t value = 0;
    for (int i = 0; i < count; ++i) {
      value |= uint64_t{static_cast<uint8_t>(in_[at_ + static_cast<size_t>(i)])} << (8 * i);
    }
    at_ += static_cast<size_t>(count);
    return value;
  }

  std::string_view in_;
  size_t at_ = 0;
  bool ok_ = true;
};

}  // namespace codedrift
