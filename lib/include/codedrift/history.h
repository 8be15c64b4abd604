// History: a model's recent figures for the API and the status page. The last `fine_capacity`
// evaluations are kept as they are; older ones are downsampled (every `coarse_every`-th point)
// into a second ring of `coarse_capacity`. Not thread-safe.
#pragma once

#include <cstddef>
#include <deque>
#include <optional>
#include <vector>

namespace codedrift {

struct HistoryPoint {
  double unix_seconds = 0;
  double entropy_bits = 0;
  std::optional<double> deployed_mean_bits;
  std::optional<double> retrained_mean_bits;
  std::optional<double> saving_ratio;
  std::optional<double> saving_lower_ratio;
  int state = 0;
};

// A History's contents, for checkpoints.
struct HistoryState {
  std::vector<HistoryPoint> coarse;  // oldest first
  std::vector<HistoryPoint> fine;    // oldest first
  size_t evicted = 0;                // fine points evicted so far
};

class History {
 public:
  History(size_t fine_capacity, size_t coarse_every, size_t coarse_capacity);

  void Add(const HistoryPoint& point);
  // Oldest first: the coarse points, then the fine ones.
  std::vector<HistoryPoint> Points() const;
  size_t size() const { return fine_.size() + coarse_.size(); }

  // Checkpoints. Import keeps the newest points that fit this history's capacities.
  HistoryState ExportState() const;
  void ImportState(const HistoryState& state);

 private:
  size_t fine_capacity_;
  size_t coarse_every_;
  size_t coarse_capacity_;
  size_t evicted_ = 0;  // fine points evicted so far, to pick every coarse_every-th
  std::deque<HistoryPoint> fine_;
  std::deque<HistoryPoint> coarse_;
};

}  // namespace codedrift
