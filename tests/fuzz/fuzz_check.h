// Shared by the fuzz targets: a property check that aborts with a message (libFuzzer and the
// replay runner both report an abort as a failure with the input that caused it), and a
// reader that takes parameters off the front of a fuzz input.
#pragma once

#include <cstddef>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <string_view>

#define FUZZ_CHECK(condition)                                                               \
  do {                                                                                      \
    if (!(condition)) {                                                                     \
      std::fprintf(stderr, "%s:%d: property failed: %s\n", __FILE__, __LINE__, #condition); \
      std::abort();                                                                         \
    }                                                                                       \
  } while (0)

namespace codedrift::fuzz {

// Consumes parameter bytes from the front of the input; past the end it yields zeros, so every
// input (even an empty one) is a valid test case. Plain value type.
class FuzzReader {
 public:
  FuzzReader(const uint8_t* data, size_t size) : data_(reinterpret_cast<const char*>(data), size) {}

  uint8_t Byte() {
    if (data_.empty()) return 0;
    const auto byte = static_cast<uint8_t>(data_.front());
    data_.remove_prefix(1);
    return byte;
  }
  uint16_t U16() { return static_cast<uint16_t>((Byte() << 8) | Byte()); }
  // What is left after the parameters.
  std::string_view Rest() const { return data_; }

 private:
  std::string_view data_;
};

}  // namespace codedrift::fuzz

// The libFuzzer entry point every target defines.
extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size);
