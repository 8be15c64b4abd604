// ConnectionFramer's run delivery: with a run handler, whole lines that lie back to back in one
// received chunk arrive as one call; every other record arrives alone, and the records, their
// order and the counters are the same as without runs. Property tests on invented streams
// against the record-by-record framer as the oracle.
#include <algorithm>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "connection_framer.h"

namespace codedrift {
namespace {

struct Delivery {
  std::vector<std::string> records;  // in order, runs split back into their lines
  size_t runs = 0;
  size_t longest_run = 0;  // records
  bool run_not_whole_lines = false;
  bool run_count_wrong = false;
  uint64_t records_counter = 0;
  uint64_t overlong_counter = 0;
};

// Invented gauge lines, a few of them longer than `max`, cut into chunks at random offsets.
std::string Stream(std::mt19937_64& rng, int lines, uint32_t max) {
  std::string out;
  std::uniform_int_distribution<int> roll(0, 99);
  for (int i = 0; i < lines; ++i) {
    std::string line =
        "gauge=g" + std::to_string(roll(rng)) + " level=" + std::to_string(roll(rng));
    const int kind = roll(rng);
    if (kind < 5) line.append(max + 7, 'x');  // overlong
    // At the limit: a line of exactly max bytes with its newline fits; one byte more does not.
    if (kind == 5) line.assign(max - 1, 'f');
    if (kind == 6) line.assign(max, 'o');
    out += line + "\n";
  }
  if (roll(rng) < 50) out += "tail_without_newline";
  return out;
}

std::vector<size_t> Cuts(std::mt19937_64& rng, size_t size, size_t longest_chunk) {
  std::uniform_int_distribution<size_t> gap(1, longest_chunk);
  std::vector<size_t> cuts;
  for (size_t at = gap(rng); at < size; at += gap(rng)) cuts.push_back(at);
  return cuts;
}

Delivery Feed(const StreamConfig& config, std::string_view stream, const std::vector<size_t>& cuts,
              bool with_runs) {
  ConnectionFramer framer(config);
  Delivery out;
  const RecordHandler one = [&](std::string_view record) { out.records.emplace_back(record); };
  const RunHandler run = [&](std::string_view text, uint64_t records) {
    ++out.runs;
    out.longest_run = std::max<size_t>(out.longest_run, records);
    if (text.empty() || text.back() != '\n') out.run_not_whole_lines = true;
    if (static_cast<uint64_t>(std::count(text.begin(), text.end(), '\n')) != records) {
      out.run_count_wrong = true;
    }
    while (!text.empty()) {
      const size_t end = text.find('\n');
      out.records.emplace_back(text.substr(0, end + 1));
      text.remove_prefix(end + 1);
    }
  };
  size_t start = 0;
  std::vector<size_t> ends = cuts;
  ends.push_back(stream.size());
  for (size_t end : ends) {
    EXPECT_TRUE(framer.Feed(stream.substr(start, end - start), one, with_runs ? run : nullptr));
    start = end;
  }
  framer.Finish(one);
  StreamCounters counters;
  framer.Publish(counters);
  out.records_counter = counters.records_total.load();
  out.overlong_counter = counters.Get(RecordRejectReason::kOverlong);
  return out;
}

class ConnectionFramerRuns : public ::testing::TestWithParam<OverlongPolicy> {};

TEST_P(ConnectionFramerRuns, SameRecordsInTheSameOrderAsOneByOne) {
  StreamConfig config;
  config.framing = Framing::kLines;
  config.overlong = GetParam();
  std::mt19937_64 rng(20240611);
  // Limits below, at and above the 64-byte scan block (the block scan applies from 64 on).
  const uint32_t limits[] = {40, 64, 65, 200};
  for (int round = 0; round < 60; ++round) {
    config.max_record_bytes = limits[round % 4];
    const std::string stream = Stream(rng, 400, config.max_record_bytes);
    // Short chunks cut lines everywhere; long ones hold many 64-byte scan blocks.
    const std::vector<size_t> cuts = Cuts(rng, stream.size(), round % 3 == 0 ? 300 : 5000);
    const Delivery oracle = Feed(config, stream, cuts, false);
    const Delivery runs = Feed(config, stream, cuts, true);
    ASSERT_EQ(runs.records, oracle.records) << "round " << round;
    EXPECT_EQ(runs.records_counter, oracle.records_counter);
    EXPECT_EQ(runs.overlong_counter, oracle.overlong_counter);
    EXPECT_EQ(runs.records_counter, oracle.records.size());
    EXPECT_FALSE(runs.run_not_whole_lines);
    EXPECT_FALSE(runs.run_count_wrong);
    EXPECT_EQ(oracle.runs, 0u);
    // Chunks of up to 300 bytes hold several ~20-byte lines: runs must actually form.
    EXPECT_GT(runs.longest_run, 1u);
  }
}

INSTANTIATE_TEST_SUITE_P(Overlong, ConnectionFramerRuns,
                         ::testing::Values(OverlongPolicy::kTruncate, OverlongPolicy::kDrop));

TEST(ConnectionFramerRunsTest, LengthPrefixedFramingNeverUsesRuns) {
  StreamConfig config;
  config.framing = Framing::kU16be;
  ConnectionFramer framer(config);
  std::vector<std::string> records;
  size_t runs = 0;
  const std::string frames = std::string("\0\3a\nb\0\2c\n", 9);
  ASSERT_TRUE(framer.Feed(
      frames, [&](std::string_view record) { records.emplace_back(record); },
      [&](std::string_view, uint64_t) { ++runs; }));
  EXPECT_EQ(records, (std::vector<std::string>{"a\nb", "c\n"}));
  EXPECT_EQ(runs, 0u);
}

}  // namespace
}  // namespace codedrift
