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

// What the soak read at one instant, and resident memory over the interval ending there.
struct SamplePoint {
  double seconds = 0;  // since the senders started
  Scrape scrape;
  // The lowest and highest VmRSS read in the interval (the soak reads it every <= 0.25 s). The
  // lowest is what stays resident between the daemon's periodic copies (window copies at each
  // evaluation, checkpoint encoding); the highest shows those copies.
  uint64_t rss_bytes = 0;
  uint64_t rss_peak_bytes = 0;
  int reloads = 0;  // reloads done so far
};

// The lowest and highest of a series of VmRSS reads. Not thread-safe.
class RssRange {
 public:
  void Add(uint64_t bytes);
  bool empty() const { return reads_ == 0; }
  uint64_t low() const { return low_; }
  uint64_t high() const { return high_; }

 private:
  uint64_t low_ = 0, high_ = 0;
  uint64_t reads_ = 0;
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

// Resident memory after the warm-up: the median of the interval floors (SamplePoint::rss_bytes)
// in the minute from `warmup_seconds` against the median in the last minute; peak_mb is the
// highest read of the run.
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
