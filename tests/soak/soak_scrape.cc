#include "soak_scrape.h"

#include <cmath>
#include <cstdlib>
#include <limits>
#include <sstream>

namespace codedrift::soak {
namespace {

constexpr char kHistogram[] = "codedrift_evaluation_seconds";

// The number in le="..." of a bucket's labels.
double BucketBound(const std::string& labels) {
  const size_t at = labels.find("le=\"");
  if (at == std::string::npos) return std::numeric_limits<double>::quiet_NaN();
  const std::string text = labels.substr(at + 4, labels.find('"', at + 4) - at - 4);
  if (text == "+Inf") return std::numeric_limits<double>::infinity();
  return std::strtod(text.c_str(), nullptr);
}

}  // namespace

Scrape Scrape::Parse(const std::string& text) {
  Scrape scrape;
  std::istringstream lines(text);
  std::string line;
  while (std::getline(lines, line)) {
    if (line.empty() || line[0] == '#') continue;
    const size_t name_end = line.find_first_of("{ ");
    const size_t value_at = line.rfind(' ');
    if (name_end == std::string::npos || value_at == std::string::npos || value_at < name_end) {
      continue;
    }
    const std::string labels =
        line[name_end] == '{' ? line.substr(name_end, value_at - name_end) : "";
    scrape.samples_.emplace(
        line.substr(0, name_end),
        std::make_pair(labels, std::strtod(line.c_str() + value_at + 1, nullptr)));
  }
  return scrape;
}

double Scrape::Value(const std::string& name, const std::vector<std::string>& labels) const {
  const auto [first, last] = samples_.equal_range(name);
  for (auto it = first; it != last; ++it) {
    bool all = true;
    for (const auto& label : labels) all = all && it->second.first.find(label) != std::string::npos;
    if (all) return it->second.second;
  }
  return 0;
}

uint64_t Scrape::Count(const std::string& name, const std::vector<std::string>& labels) const {
  return static_cast<uint64_t>(std::llround(Value(name, labels)));
}

double Scrape::Sum(const std::string& name) const {
  double total = 0;
  const auto [first, last] = samples_.equal_range(name);
  for (auto it = first; it != last; ++it) total += it->second.second;
  return total;
}

EvaluationHistogram Scrape::Evaluations() const {
  EvaluationHistogram h;
  h.count = Count(std::string(kHistogram) + "_count");
  h.sum = Value(std::string(kHistogram) + "_sum");
  const auto [first, last] = samples_.equal_range(std::string(kHistogram) + "_bucket");
  for (auto it = first; it != last; ++it) {
    h.buckets.emplace_back(BucketBound(it->second.first),
                           static_cast<uint64_t>(std::llround(it->second.second)));
  }
  return h;  // the exposition lists buckets in ascending order
}

IntervalLatency Between(const EvaluationHistogram& before, const EvaluationHistogram& after) {
  IntervalLatency latency;
  if (after.count <= before.count) return latency;
  latency.evaluations = after.count - before.count;
  latency.mean_seconds = (after.sum - before.sum) / static_cast<double>(latency.evaluations);
  // The slowest evaluation of the interval lies in the first bucket whose cumulative count grew
  // by as much as the total did.
  for (size_t i = 0; i < after.buckets.size(); ++i) {
    const uint64_t was = i < before.buckets.size() ? before.buckets[i].second : 0;
    if (after.buckets[i].second - was == latency.evaluations) {
      latency.max_bound_seconds = after.buckets[i].first;
      break;
    }
  }
  return latency;
}

}  // namespace codedrift::soak
