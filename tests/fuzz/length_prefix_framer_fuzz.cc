// Fuzz target: LengthPrefixFramer (u16be and u32be).
// Property: the records, counters and the framing-lost verdict do not depend on how the stream
// is cut into chunks (whole, fuzz-chosen chunk sizes, byte by byte), and equal a plain
// reference parse of the whole stream: frames up to the first length above max_record_bytes
// (after which nothing more is delivered), then truncated_frame when the stream ends inside a
// header or a body. A framer reused after Finish behaves like a new one.
#include <string>
#include <vector>

#include "codedrift/framer.h"

#include "fuzz_check.h"
#include "fuzz_chunks.h"

namespace codedrift::fuzz {
namespace {

struct Outcome {
  std::vector<std::string> records;
  uint64_t oversized = 0;
  uint64_t truncated = 0;
  bool failed = false;
};

bool operator==(const Outcome& a, const Outcome& b) {
  return a.records == b.records && a.oversized == b.oversized && a.truncated == b.truncated &&
         a.failed == b.failed;
}

Outcome Frame(LengthPrefixFramer& framer, std::string_view data, const std::vector<size_t>& sizes) {
  Outcome out;
  const FramerCounters before = framer.counters();
  auto sink = [&out](std::string_view record) { out.records.emplace_back(record); };
  bool feeding = true;
  ForEachChunk(data, sizes, [&](std::string_view chunk) {
    const bool ok = framer.Feed(chunk, sink);
    FUZZ_CHECK(ok == !framer.failed());
    // Once lost, the framing stays lost: Feed keeps returning false.
    FUZZ_CHECK(feeding || !ok);
    feeding = ok;
  });
  out.failed = framer.failed();
  framer.Finish();
  const FramerCounters& after = framer.counters();
  FUZZ_CHECK(after.records - before.records == out.records.size());
  out.oversized = after.oversized_frame - before.oversized_frame;
  out.truncated = after.truncated_frame - before.truncated_frame;
  return out;
}

Outcome Reference(std::string_view data, int prefix_bytes, uint32_t max_record_bytes) {
  Outcome out;
  size_t pos = 0;
  while (pos < data.size()) {
    if (data.size() - pos < static_cast<size_t>(prefix_bytes)) {
      out.truncated = 1;
      break;
    }
    uint32_t length = 0;
    for (int i = 0; i < prefix_bytes; ++i) {
      length = (length << 8) | static_cast<unsigned char>(data[pos + i]);
    }
    pos += prefix_bytes;
    if (length > max_record_bytes) {
      out.oversized = 1;
      out.failed = true;
      break;
    }
    if (data.size() - pos < length) {
      out.truncated = 1;
      break;
    }
    out.records.emplace_back(data.substr(pos, length));
    pos += length;
  }
  return out;
}

}  // namespace
}  // namespace codedrift::fuzz

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  FuzzReader reader(data, size);
  const uint8_t shape = reader.Byte();
  const bool wide = (shape & 1) != 0;
  // Up to 8 KiB: lengths in the input hit both sides of the limit often.
  const uint32_t max_record_bytes = 1 + ((shape >> 1) % 64) * 128 + reader.Byte() % 128;
  const std::vector<size_t> sizes = TakeChunkSizes(reader);
  const std::string_view stream = reader.Rest();

  const Outcome expected = Reference(stream, wide ? 4 : 2, max_record_bytes);
  LengthPrefixFramer framer(wide ? LengthPrefix::kU32be : LengthPrefix::kU16be, max_record_bytes);
  const Outcome whole = Frame(framer, stream, {});
  const Outcome chunked = Frame(framer, stream, sizes);  // reused after Finish
  const Outcome bytewise = Frame(framer, stream, {1});
  FUZZ_CHECK(whole == expected);
  FUZZ_CHECK(chunked == expected);
  FUZZ_CHECK(bytewise == expected);
  FUZZ_CHECK(framer.buffered_bytes() == 0);
  return 0;
}
