// ByteSelection: a set of byte values whose occurrences are counted, with a scan that skips the
// others at a few instructions per 32 bytes. A bytes model needs lifetime counts only for the
// bytes its deployed table has no code for (the unknown-symbol figures); with a table that
// covers the traffic, or no table, ingest then does no per-byte counting at all.
#pragma once

#include <bitset>
#include <cstdint>
#include <string_view>

namespace codedrift {

class ByteSelection {
 public:
  // Every byte value.
  ByteSelection() : ByteSelection(std::bitset<256>().set()) {}
  explicit ByteSelection(const std::bitset<256>& bytes);

  bool none() const { return bytes_.none(); }
  bool all() const { return bytes_.all(); }

  // Adds the count of every byte of `data` that is in the selection to `histogram` (which is
  // not cleared first); other entries are left alone. Data that is mostly selected bytes is
  // counted whole instead (CountBytes' speed), so no input makes it much slower than that.
  void Count(std::string_view data, uint64_t (&histogram)[256]) const;
  // The same with no vector instructions (the path of CPUs without AVX2; tests compare both).
  void CountPortable(std::string_view data, uint64_t (&histogram)[256]) const;

 private:
  void CountWith(std::string_view data, uint64_t (&histogram)[256], bool vector) const;
  uint64_t CountSparse(std::string_view data, uint64_t (&histogram)[256], bool vector) const;

  std::bitset<256> bytes_;
  // The scan's lookup rows: for each low nibble l, bit h of rows_[0][l] is set when byte
  // h * 16 + l is selected (h < 8), and of rows_[1][l] when byte (h + 8) * 16 + l is.
  alignas(16) uint8_t rows_[2][16] = {};
};

}  // namespace codedrift
