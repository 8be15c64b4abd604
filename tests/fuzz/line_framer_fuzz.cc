// Fuzz target: LineFramer.
// Property: the records and counters a LineFramer hands out do not depend on how the stream is
// cut into chunks (fed whole, fed in fuzz-chosen chunk sizes, fed byte by byte) nor on whether
// runs of whole lines are taken at once (FeedRuns, the daemon's path), and they equal a plain
// reference that splits the whole input at '\n' and applies the overlong policy to each line;
// no record is longer than max_record_bytes, every run is whole lines and says how many, and a
// framer reused after Finish behaves like a new one.
#include <string>
#include <vector>

#include "codedrift/framer.h"

#include "fuzz_check.h"
#include "fuzz_chunks.h"

namespace codedrift::fuzz {
namespace {

struct Outcome {
  std::vector<std::string> records;
  FramerCounters counters;
};

bool SameCounters(const FramerCounters& a, const FramerCounters& b) {
  return a.records == b.records && a.overlong_truncated == b.overlong_truncated &&
         a.overlong_dropped == b.overlong_dropped && a.unterminated == b.unterminated &&
         a.oversized_frame == b.oversized_frame && a.truncated_frame == b.truncated_frame;
}

// Feeds `data` in chunks whose sizes cycle through `sizes` (0 means: the rest at once), with
// Feed, or with FeedRuns and each run split back into its lines.
Outcome Frame(LineFramer& framer, std::string_view data, const std::vector<size_t>& sizes,
              bool runs = false) {
  Outcome out;
  const FramerCounters before = framer.counters();
  auto sink = [&out](std::string_view record) { out.records.emplace_back(record); };
  auto run = [&out](std::string_view text, uint64_t records) {
    FUZZ_CHECK(records > 0 && !text.empty() && text.back() == '\n');
    for (; records > 0; --records) {
      const size_t end = text.find('\n');
      FUZZ_CHECK(end != std::string_view::npos);
      out.records.emplace_back(text.substr(0, end + 1));
      text.remove_prefix(end + 1);
    }
    FUZZ_CHECK(text.empty());
  };
  ForEachChunk(data, sizes, [&](std::string_view chunk) {
    if (runs) {
      framer.FeedRuns(chunk, sink, run);
    } else {
      framer.Feed(chunk, sink);
    }
  });
  framer.Finish(sink);
  const FramerCounters& after = framer.counters();
  out.counters.records = after.records - before.records;
  out.counters.overlong_truncated = after.overlong_truncated - before.overlong_truncated;
  out.counters.overlong_dropped = after.overlong_dropped - before.overlong_dropped;
  out.counters.unterminated = after.unterminated - before.unterminated;
  return out;
}

// DESIGN.md §6 and framer.h, applied to the whole stream at once.
Outcome Reference(std::string_view data, size_t max_record_bytes, OverlongPolicy policy) {
  Outcome out;
  size_t pos = 0;
  while (pos < data.size()) {
    const size_t newline = data.find('\n', pos);
    const bool terminated = newline != std::string_view::npos;
    const size_t end = terminated ? newline + 1 : data.size();
    const std::string_view line = data.substr(pos, end - pos);
    pos = end;
    if (line.size() <= max_record_bytes) {
      out.records.emplace_back(line);
      ++out.counters.records;
      if (!terminated) ++out.counters.unterminated;
    } else if (policy == OverlongPolicy::kTruncate) {
      out.records.emplace_back(line.substr(0, max_record_bytes));
      ++out.counters.records;
      ++out.counters.overlong_truncated;
    } else {
      ++out.counters.overlong_dropped;
    }
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
  // Small limits so that overlong lines are common; 1 is the smallest the framer accepts.
  const uint32_t max_record_bytes = 1 + (shape & 0x3f);
  const OverlongPolicy policy =
      (shape & 0x40) != 0 ? OverlongPolicy::kDrop : OverlongPolicy::kTruncate;
  const std::vector<size_t> sizes = TakeChunkSizes(reader);
  const std::string_view stream = reader.Rest();

  const Outcome expected = Reference(stream, max_record_bytes, policy);
  LineFramer framer(max_record_bytes, policy);
  const Outcome whole = Frame(framer, stream, {});
  const Outcome chunked = Frame(framer, stream, sizes);  // reused after Finish
  const Outcome bytewise = Frame(framer, stream, {1});
  const Outcome runs_whole = Frame(framer, stream, {}, /*runs=*/true);
  const Outcome runs_chunked = Frame(framer, stream, sizes, /*runs=*/true);
  for (const Outcome* got : {&whole, &chunked, &bytewise, &runs_whole, &runs_chunked}) {
    FUZZ_CHECK(got->records == expected.records);
    FUZZ_CHECK(SameCounters(got->counters, expected.counters));
    for (const std::string& record : got->records) FUZZ_CHECK(record.size() <= max_record_bytes);
  }
  FUZZ_CHECK(framer.buffered_bytes() == 0);
  return 0;
}
