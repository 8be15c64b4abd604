// LineFramer and LengthPrefixFramer: records, limits, counters, and chunking independence.
// The property tests compare against oracles written here from the rules in framer.h, on
// invented random streams.
#include "codedrift/framer.h"

#include <random>
#include <string>
#include <type_traits>
#include <vector>

#include <gtest/gtest.h>

namespace codedrift {
namespace {

struct Collected {
  std::vector<std::string> records;
  FramerCounters counters;
  bool operator==(const Collected& other) const {
    return records == other.records && counters.records == other.counters.records &&
           counters.overlong_truncated == other.counters.overlong_truncated &&
           counters.overlong_dropped == other.counters.overlong_dropped &&
           counters.unterminated == other.counters.unterminated &&
           counters.oversized_frame == other.counters.oversized_frame &&
           counters.truncated_frame == other.counters.truncated_frame;
  }
};

// Feeds `stream` to a new framer cut at the given offsets (ascending, inside the stream), then
// finishes it (a LineFramer hands its unterminated last line to the sink there).
template <typename Framer>
Collected FeedCut(Framer framer, std::string_view stream, const std::vector<size_t>& cuts) {
  Collected out;
  auto sink = [&](std::string_view record) { out.records.emplace_back(record); };
  size_t start = 0;
  for (size_t cut : cuts) {
    framer.Feed(stream.substr(start, cut - start), sink);
    start = cut;
  }
  framer.Feed(stream.substr(start), sink);
  if constexpr (std::is_same_v<Framer, LineFramer>) {
    framer.Finish(sink);
  } else {
    framer.Finish();
  }
  out.counters = framer.counters();
  return out;
}

Collected FeedLines(std::string_view stream, const std::vector<size_t>& cuts, uint32_t max,
                    OverlongPolicy policy) {
  return FeedCut(LineFramer(max, policy), stream, cuts);
}

Collected FeedFrames(std::string_view stream, const std::vector<size_t>& cuts, LengthPrefix prefix,
                     uint32_t max) {
  return FeedCut(LengthPrefixFramer(prefix, max), stream, cuts);
}

// The line rules applied to the whole stream at once.
Collected LineOracle(std::string_view stream, uint32_t max, OverlongPolicy policy) {
  Collected out;
  size_t start = 0;
  while (start < stream.size()) {
    const size_t newline = stream.find('\n', start);
    const bool terminated = newline != std::string_view::npos;
    const size_t end = terminated ? newline + 1 : stream.size();
    const std::string_view line = stream.substr(start, end - start);
    start = end;
    if (line.size() > max) {
      if (policy == OverlongPolicy::kTruncate) {
        out.records.emplace_back(line.substr(0, max));
        ++out.counters.overlong_truncated;
        ++out.counters.records;
      } else {
        ++out.counters.overlong_dropped;
      }
      continue;
    }
    out.records.emplace_back(line);
    ++out.counters.records;
    if (!terminated) ++out.counters.unterminated;
  }
  return out;
}

std::string Frame(LengthPrefix prefix, std::string_view body) {
  std::string out;
  const uint32_t size = static_cast<uint32_t>(body.size());
  if (prefix == LengthPrefix::kU32be) {
    out += static_cast<char>(size >> 24);
    out += static_cast<char>(size >> 16);
  }
  out += static_cast<char>(size >> 8);
  out += static_cast<char>(size);
  out += body;
  return out;
}

// Random invented stream: short and long lines, NUL and high bytes, maybe no final newline.
std::string RandomLineStream(std::mt19937& rng) {
  std::uniform_int_distribution<int> lines(0, 12);
  std::uniform_int_distribution<int> length(0, 24);
  std::uniform_int_distribution<int> byte(0, 255);
  std::bernoulli_distribution ends_with_newline(0.6);
  std::string stream;
  const int count = lines(rng);
  for (int i = 0; i < count; ++i) {
    const int n = length(rng);
    for (int j = 0; j < n; ++j) {
      char c = static_cast<char>(byte(rng));
      stream += c == '\n' ? 'x' : c;
    }
    if (i + 1 < count || ends_with_newline(rng)) stream += '\n';
  }
  return stream;
}

TEST(LineFramer, RecordsIncludeTheirNewline) {
  Collected got = FeedLines("alpha\nbeta\n\ngamma\n", {}, 64, OverlongPolicy::kTruncate);
  EXPECT_EQ(got.records, (std::vector<std::string>{"alpha\n", "beta\n", "\n", "gamma\n"}));
  EXPECT_EQ(got.counters.records, 4u);
  EXPECT_EQ(got.counters.unterminated, 0u);
}

TEST(LineFramer, RecordWithinOneChunkIsAViewIntoIt) {
  const std::string chunk = "one\ntwo\nthr";
  LineFramer framer(64, OverlongPolicy::kTruncate);
  std::vector<bool> inside;
  framer.Feed(chunk, [&](std::string_view record) {
    inside.push_back(record.data() >= chunk.data() &&
                     record.data() + record.size() <= chunk.data() + chunk.size());
  });
  EXPECT_EQ(inside, (std::vector<bool>{true, true}));
  EXPECT_EQ(framer.buffered_bytes(), 3u);  // "thr" carried over
  std::string joined;
  framer.Feed("ee\n", [&](std::string_view record) { joined = record; });
  EXPECT_EQ(joined, "three\n");
  EXPECT_EQ(framer.buffered_bytes(), 0u);
}

TEST(LineFramer, LineOfExactlyMaxBytesWithNewlineFits) {
  Collected got = FeedLines("abc\n", {2}, 4, OverlongPolicy::kDrop);
  EXPECT_EQ(got.records, (std::vector<std::string>{"abc\n"}));
  EXPECT_EQ(got.counters.overlong_dropped, 0u);
}

TEST(LineFramer, TruncateEmitsThePrefixOnceWithoutNewline) {
  Collected got = FeedLines("abcd\nxy\nlonglonglong\nz\n", {}, 4, OverlongPolicy::kTruncate);
  EXPECT_EQ(got.records, (std::vector<std::string>{"abcd", "xy\n", "long", "z\n"}));
  EXPECT_EQ(got.counters.overlong_truncated, 2u);
  EXPECT_EQ(got.counters.records, 4u);
}

TEST(LineFramer, DropDiscardsThroughTheNextNewline) {
  Collected got = FeedLines("abcd\nxy\nlonglonglong\nz\n", {3, 9, 15}, 4, OverlongPolicy::kDrop);
  EXPECT_EQ(got.records, (std::vector<std::string>{"xy\n", "z\n"}));
  EXPECT_EQ(got.counters.overlong_dropped, 2u);
  EXPECT_EQ(got.counters.records, 2u);
}

TEST(LineFramer, FinishEmitsTheUnterminatedLastLineAsIs) {
  Collected got = FeedLines("a\nbcd", {3}, 3, OverlongPolicy::kTruncate);
  EXPECT_EQ(got.records, (std::vector<std::string>{"a\n", "bcd"}));
  EXPECT_EQ(got.counters.unterminated, 1u);
  EXPECT_EQ(got.counters.overlong_truncated, 0u);
}

TEST(LineFramer, OverlongUnterminatedTailCountsOnlyAsOverlong) {
  Collected got = FeedLines("a\nbcdef", {}, 3, OverlongPolicy::kDrop);
  EXPECT_EQ(got.records, (std::vector<std::string>{"a\n"}));
  EXPECT_EQ(got.counters.overlong_dropped, 1u);
  EXPECT_EQ(got.counters.unterminated, 0u);
}

TEST(LineFramer, BinaryBytesPassThrough) {
  const std::string stream("\0\xff\x80z\n\0\n", 7);
  Collected got = FeedLines(stream, {1}, 16, OverlongPolicy::kTruncate);
  ASSERT_EQ(got.records.size(), 2u);
  EXPECT_EQ(got.records[0], std::string("\0\xff\x80z\n", 5));
  EXPECT_EQ(got.records[1], std::string("\0\n", 2));
}

TEST(LineFramer, FinishResetsForReuse) {
  LineFramer framer(8, OverlongPolicy::kTruncate);
  std::vector<std::string> records;
  auto sink = [&](std::string_view record) { records.emplace_back(record); };
  framer.Feed("partial", sink);
  framer.Finish(sink);
  framer.Feed("next\n", sink);
  framer.Finish(sink);
  EXPECT_EQ(records, (std::vector<std::string>{"partial", "next\n"}));
}

TEST(LineFramer, EverySplitPointGivesTheSameRecordsAsTheOracle) {
  std::mt19937 rng(20240611);
  for (int trial = 0; trial < 300; ++trial) {
    const std::string stream = RandomLineStream(rng);
    const uint32_t max = std::uniform_int_distribution<uint32_t>(1, 20)(rng);
    for (OverlongPolicy policy : {OverlongPolicy::kTruncate, OverlongPolicy::kDrop}) {
      const Collected expected = LineOracle(stream, max, policy);
      ASSERT_EQ(FeedLines(stream, {}, max, policy), expected) << "trial " << trial;
      for (size_t cut = 0; cut <= stream.size(); ++cut) {
        ASSERT_EQ(FeedLines(stream, {cut}, max, policy), expected)
            << "trial " << trial << " cut " << cut;
      }
      std::vector<size_t> every_byte;
      for (size_t cut = 1; cut < stream.size(); ++cut) every_byte.push_back(cut);
      ASSERT_EQ(FeedLines(stream, every_byte, max, policy), expected) << "trial " << trial;
    }
  }
}

TEST(LengthPrefixFramer, ReadsBigEndianLengths) {
  for (LengthPrefix prefix : {LengthPrefix::kU16be, LengthPrefix::kU32be}) {
    const std::string binary("\n\0\xff", 3);
    const std::string stream = Frame(prefix, "hello") + Frame(prefix, "") + Frame(prefix, binary);
    Collected got = FeedFrames(stream, {}, prefix, 1024);
    EXPECT_EQ(got.records, (std::vector<std::string>{"hello", "", binary}));
    EXPECT_EQ(got.counters.records, 3u);
  }
  // 0x0102 = 258 bytes: the high byte comes first.
  const std::string body(258, 'q');
  const std::string stream = std::string("\x01\x02", 2) + body;
  Collected got = FeedFrames(stream, {1, 100}, LengthPrefix::kU16be, 1024);
  EXPECT_EQ(got.records, (std::vector<std::string>{body}));
}

TEST(LengthPrefixFramer, FrameWithinOneChunkIsAViewIntoIt) {
  const std::string chunk = Frame(LengthPrefix::kU32be, "abc") + Frame(LengthPrefix::kU32be, "de");
  LengthPrefixFramer framer(LengthPrefix::kU32be, 16);
  int inside = 0;
  EXPECT_TRUE(framer.Feed(chunk, [&](std::string_view record) {
    inside += record.data() >= chunk.data() &&
              record.data() + record.size() <= chunk.data() + chunk.size();
  }));
  EXPECT_EQ(inside, 2);
}

TEST(LengthPrefixFramer, LengthAboveMaxLosesFramingForGood) {
  LengthPrefixFramer framer(LengthPrefix::kU16be, 4);
  std::vector<std::string> records;
  auto sink = [&](std::string_view record) { records.emplace_back(record); };
  EXPECT_TRUE(framer.Feed(Frame(LengthPrefix::kU16be, "abcd"), sink));
  EXPECT_FALSE(
      framer.Feed(Frame(LengthPrefix::kU16be, "abcde") + Frame(LengthPrefix::kU16be, "x"), sink));
  EXPECT_TRUE(framer.failed());
  EXPECT_FALSE(framer.Feed(Frame(LengthPrefix::kU16be, "y"), sink));
  EXPECT_EQ(records, (std::vector<std::string>{"abcd"}));
  EXPECT_EQ(framer.counters().oversized_frame, 1u);
  framer.Finish();
  EXPECT_EQ(framer.counters().truncated_frame, 0u);  // a lost stream is not also truncated
}

TEST(LengthPrefixFramer, StreamEndingInsideAFrameCountsTruncated) {
  const std::string frame = Frame(LengthPrefix::kU32be, "payload");
  for (size_t keep = 1; keep < frame.size(); ++keep) {  // inside the header, then the body
    Collected got = FeedFrames(frame.substr(0, keep), {}, LengthPrefix::kU32be, 64);
    EXPECT_TRUE(got.records.empty()) << keep;
    EXPECT_EQ(got.counters.truncated_frame, 1u) << keep;
  }
  Collected whole = FeedFrames(frame, {}, LengthPrefix::kU32be, 64);
  EXPECT_EQ(whole.counters.truncated_frame, 0u);
}

TEST(LengthPrefixFramer, EverySplitPointGivesTheSameRecords) {
  std::mt19937 rng(7);
  for (int trial = 0; trial < 200; ++trial) {
    const LengthPrefix prefix = trial % 2 == 0 ? LengthPrefix::kU16be : LengthPrefix::kU32be;
    const uint32_t max = std::uniform_int_distribution<uint32_t>(1, 16)(rng);
    std::vector<std::string> bodies;
    std::string stream;
    const int frames = std::uniform_int_distribution<int>(0, 8)(rng);
    for (int i = 0; i < frames; ++i) {
      std::string body(std::uniform_int_distribution<size_t>(0, max)(rng), '\0');
      for (char& c : body) c = static_cast<char>(rng());
      stream += Frame(prefix, body);
      bodies.push_back(body);
    }
    // Sometimes end with a cut-off frame, sometimes with one that is too long.
    const int tail = std::uniform_int_distribution<int>(0, 2)(rng);
    std::string extra;
    if (tail == 1) {
      extra = Frame(prefix, std::string(max, 'p'));
      extra.resize(std::uniform_int_distribution<size_t>(1, extra.size() - 1)(rng));
    }
    if (tail == 2) extra = Frame(prefix, std::string(max + 1, 'L'));
    stream += extra;
    Collected expected;
    expected.records = bodies;
    expected.counters.records = bodies.size();
    expected.counters.truncated_frame = tail == 1 ? 1 : 0;
    expected.counters.oversized_frame = tail == 2 ? 1 : 0;
    ASSERT_EQ(FeedFrames(stream, {}, prefix, max), expected) << trial;
    for (size_t cut = 0; cut <= stream.size(); ++cut) {
      ASSERT_EQ(FeedFrames(stream, {cut}, prefix, max), expected) << trial << " cut " << cut;
    }
    std::vector<size_t> every_byte;
    for (size_t cut = 1; cut < stream.size(); ++cut) every_byte.push_back(cut);
    ASSERT_EQ(FeedFrames(stream, every_byte, prefix, max), expected) << trial;
  }
}

}  // namespace
}  // namespace codedrift
