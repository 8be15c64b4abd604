// A sender of random values against the real codedriftd on loopback (issue #6: hostile input
// changes nothing and memory stays bounded): 200,000 records of random 32-bit fields and
// random 4-byte blocks. With max_distinct 1000 the window of each model holds exactly 1000
// distinct values plus the overflow symbol "", every record is counted, /metrics keeps
// answering and the daemon stays under a stated memory bound. The records are invented
// (xorshift bytes).
#include <atomic>
#include <chrono>
#include <cstdint>
#include <future>
#include <string>
#include <thread>

#include <gtest/gtest.h>

#include "harness.h"
#include "hostile_clients.h"

namespace codedrift::testing {
namespace {

constexpr int kRecords = 200000;
constexpr int kRecordBytes = 8;  // field: bytes 0..3; blocks: two 4-byte blocks per record
constexpr int kMaxDistinct = 1000;

// Working set with the cap: two models whose count windows hold at most 1,048,576 ids (4 MiB
// each), tables and per-id arrays of 1001 entries, a few MiB of code and buffers (19 MiB
// measured). Without the cap the same traffic interns ~200,000 field values and ~400,000
// blocks, each a key in the model, in every sample and in the evaluator's count maps (190 MiB
// measured with max_distinct 16777216); 64 MiB sits well between the two.
constexpr int64_t kMaxDaemonRssBytes = int64_t{64} << 20;

std::string Config() {
  const std::string cap = std::to_string(kMaxDistinct);
  return "http: {listen: 127.0.0.1:0}\n"
         "state_dir: state\n"
         "evaluate_every: 100ms\n"
         "streams:\n"
         "  - name: random\n"
         "    listen: tcp://127.0.0.1:0\n"
         "    framing: u32be\n"
         "    max_record_bytes: 64\n"
         "    models:\n"
         "      - name: field\n"
         "        symbols: {kind: field, width_bits: 32, max_distinct: " +
         cap +
         "}\n"
         "        table: field.table\n"
         "      - name: blocks\n"
         "        symbols: {kind: bytes, block: 4, max_distinct: " +
         cap + "}\n";
}

// A field:32 table that knows one value; everything else, the overflow included, escapes.
constexpr char kFieldTable[] =
    "table: 1\nalphabet: field:32\nkind: prefix\nescape: {length: 1, literal_bits: 32}\n"
    "lengths:\n  0: 1\n";

// kRecords frames of kRecordBytes random bytes; `zero_fields` counts records whose field
// (first four bytes) is 0, the one value the table covers.
std::string RandomFrames(int& zero_fields) {
  zero_fields = 0;
  std::string out;
  out.reserve(static_cast<size_t>(kRecords) * (4 + kRecordBytes));
  uint64_t state = 0x2545f4914f6cdd1dull;
  for (int i = 0; i < kRecords; ++i) {
    state ^= state << 13;
    state ^= state >> 7;
    state ^= state << 17;
    std::string record(kRecordBytes, '\0');
    for (int b = 0; b < kRecordBytes; ++b) record[b] = static_cast<char>(state >> (8 * b));
    zero_fields += record.compare(0, 4, std::string(4, '\0')) == 0 ? 1 : 0;
    out += U32Frame(record);
  }
  return out;
}

TEST(DistinctCap, RandomFieldsAndBlocksStayAtTheCap) {
  TempDir dir;
  dir.Write("field.table", kFieldTable);
  DaemonProcess daemon(dir, Config());
  ASSERT_TRUE(daemon.WaitReady()) << daemon.Log();
  int zero_fields = 0;
  const std::string frames = RandomFrames(zero_fields);

  std::atomic<bool> sending{true};
  std::atomic<int> metrics_answers{0};
  std::thread scraper([&] {
    while (sending) {
      if (HttpCall(daemon.http_port(), "GET", "/metrics").status == 200) ++metrics_answers;
      std::this_thread::sleep_for(std::chrono::milliseconds(50));  // a scrape pace, not a wait
    }
  });
  const bool sent = SendAndFinish(daemon.stream_port("random"), frames);
  // Every record counted; then an evaluation that has seen all of them.
  const auto records = [&] {
    return daemon.Metric("codedrift_records_total", {"stream=\"random\""}).value_or(-1);
  };
  const bool all_counted = WaitFor([&] { return records() == kRecords; });
  const bool evaluated = WaitFor([&] {
    return daemon.ModelJson("random", "field").value("window_symbols", 0) == kRecords &&
           daemon.ModelJson("random", "blocks").value("window_symbols", 0) == 2 * kRecords;
  });
  sending = false;
  scraper.join();
  ASSERT_TRUE(sent);
  EXPECT_TRUE(all_counted) << records();
  ASSERT_TRUE(evaluated) << daemon.ModelJson("random", "field").dump();
  EXPECT_GT(metrics_answers.load(), 0);
  EXPECT_EQ(daemon.Metric("codedrift_records_rejected_total", {"stream=\"random\""}).value_or(0),
            0);

  // The windows hold every symbol sent, and exactly the cap plus the overflow symbol.
  const nlohmann::json field = daemon.ModelJson("random", "field");
  const nlohmann::json blocks = daemon.ModelJson("random", "blocks");
  EXPECT_EQ(field["distinct"], kMaxDistinct + 1) << field.dump();
  EXPECT_EQ(blocks["distinct"], kMaxDistinct + 1) << blocks.dump();
  EXPECT_EQ(daemon.Metric("codedrift_symbols_total", {"model=\"field\""}), kRecords);
  EXPECT_EQ(daemon.Metric("codedrift_symbols_total", {"model=\"blocks\""}), 2 * kRecords);
  // The overflow symbol is named "" and, holding nearly all traffic, leads the drift.
  ASSERT_FALSE(field["top_drift"].empty()) << field.dump();
  EXPECT_EQ(field["top_drift"][0]["symbol"], "") << field["top_drift"].dump();
  // DESIGN.md section 3: an uncovered symbol costs the escape (1) plus its literal (32 bits).
  EXPECT_EQ(field["top_drift"][0]["length"], 1 + 32);
  EXPECT_EQ(field["unknown_symbols"], kRecords - zero_fields) << field.dump();  // covers only 0

  // Still serving, and small: now and at the peak.
  EXPECT_EQ(HttpCall(daemon.http_port(), "GET", "/metrics").status, 200);
  EXPECT_TRUE(daemon.Running());
  for (const std::string status_field : {"VmRSS:", "VmHWM:"}) {
    const int64_t bytes = ProcessMemoryBytes(daemon.pid(), status_field);
    EXPECT_GT(bytes, 0) << status_field;
    EXPECT_LT(bytes, kMaxDaemonRssBytes + kSanitizerRssAllowance)
        << status_field << " " << (bytes >> 20) << " MiB";
  }
  EXPECT_EQ(daemon.Stop(), 0) << daemon.Log();
}

}  // namespace
}  // namespace codedrift::testing
