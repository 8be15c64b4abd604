// The soak benchmark's output: one table row per sample (throughput, resident memory,
// evaluation latency, webhook deliveries, reloads), the resident-memory judgement, and the
// list of checks with the verdict.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "soak_config.h"
#include "soak_scrape.h"

namespace codedrift::soak {

// What the soak read at one instant.
struct SamplePoint {
  double seconds = 0;  // since the senders started
  Scrape scrape;
  uint64_t rss_bytes = 0;
  int reloads = 0;  // reloads done so far
};

// The table: a header, then a row per interval between two samples.
void PrintHeader(const std::vector<SoakStream>& streams);
void PrintRow(const std::vector<SoakStream>& streams, const SamplePoint& before,
              const SamplePoint& after);
// Total bytes and records per second over an interval, all streams together.
double IntervalMegabytesPerSecond(const std::vector<SoakStream>& streams, const SamplePoint& before,
                                  const SamplePoint& after);
double IntervalRecordsPerSecond(const std::vector<SoakStream>& streams, const SamplePoint& before,
                                const SamplePoint& after);

// Resident memory after the warm-up: the median of the last three samples against the first
// sample at or after `warmup_seconds`.
struct RssJudgement {
  bool judged = false;  // false: too short for a warm-up and two separate minutes after it
  double reference_mb = 0, reference_at = 0, final_mb = 0, growth = 0, peak_mb = 0;
};
RssJudgement JudgeRss(const std::vector<SamplePoint>& samples, double warmup_seconds);

// Collects checks; prints each as it is made. Not thread-safe.
class Verdict {
 public:
  bool Check(bool ok, const std::string& what);
  bool passed() const { return failures_ == 0; }
  int failures() const { return failures_; }

 private:
  int failures_ = 0;
};

}  // namespace codedrift::soak
