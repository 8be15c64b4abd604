// One scrape of the daemon's GET /metrics, parsed once so a soak sample reads every figure
// from the same instant: counters by name and labels, and the evaluation-time histogram.
#pragma once

#include <cstdint>
#include <map>
#include <string>
#include <utility>
#include <vector>

namespace codedrift::soak {

// The cumulative codedrift_evaluation_seconds histogram.
struct EvaluationHistogram {
  uint64_t count = 0;
  double sum = 0;
  std::vector<std::pair<double, uint64_t>> buckets;  // (le, cumulative count), ascending le
};

// Parsed Prometheus text. Plain value type.
class Scrape {
 public:
  // Parses `text`; `ok()` is false when it was empty (the daemon did not answer).
  static Scrape Parse(const std::string& text);
  bool ok() const { return !samples_.empty(); }

  // The value of the first sample named `name` whose labels contain every one of `labels`
  // (each `key="value"`), or 0 when there is none.
  double Value(const std::string& name, const std::vector<std::string>& labels = {}) const;
  uint64_t Count(const std::string& name, const std::vector<std::string>& labels = {}) const;
  // The sum over every sample named `name` (e.g. codedrift_alerts_total of all models).
  double Sum(const std::string& name) const;
  EvaluationHistogram Evaluations() const;

 private:
  // name -> (labels text, value), in exposition order
  std::multimap<std::string, std::pair<std::string, double>> samples_;
};

// The interval between two histograms: mean seconds and the upper bound of the bucket that
// holds the slowest evaluation (0 and 0 when no evaluation ran in between).
struct IntervalLatency {
  uint64_t evaluations = 0;
  double mean_seconds = 0;
  double max_bound_seconds = 0;  // +Inf as infinity
};
IntervalLatency Between(const EvaluationHistogram& before, const EvaluationHistogram& after);

}  // namespace codedrift::soak
