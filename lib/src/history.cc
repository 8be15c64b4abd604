#include "codedrift/history.h"

#include <algorithm>

namespace codedrift {

History::History(size_t fine_capacity, size_t coarse_every, size_t coarse_capacity)
    : fine_capacity_(std::max<size_t>(fine_capacity, 1)),
      coarse_every_(std::max<size_t>(coarse_every, 1)),
      coarse_capacity_(coarse_capacity) {}

void History::Add(const HistoryPoint& point) {
  fine_.push_back(point);
  if (fine_.size() <= fine_capacity_) return;
  if (evicted_++ % coarse_every_ == 0 && coarse_capacity_ > 0) {
    coarse_.push_back(fine_.front());
    if (coarse_.size() > coarse_capacity_) coarse_.pop_front();
  }
  fine_.pop_front();
}

std::vector<HistoryPoint> History::Points() const {
  std::vector<HistoryPoint> points(coarse_.begin(), coarse_.end());
  points.insert(points.end(), fine_.begin(), fine_.end());
  return points;
}

HistoryState History::ExportState() const {
  return HistoryState{.coarse = {coarse_.begin(), coarse_.end()},
                      .fine = {fine_.begin(), fine_.end()},
                      .evicted = evicted_};
}

void History::ImportState(const HistoryState& state) {
  const auto tail = [](const std::vector<HistoryPoint>& points, size_t capacity) {
    const size_t skip = points.size() > capacity ? points.size() - capacity : 0;
    return std::deque<HistoryPoint>(points.begin() + static_cast<std::ptrdiff_t>(skip),
                                    points.end());
  };
  coarse_ = tail(state.coarse, coarse_capacity_);
  fine_ = tail(state.fine, fine_capacity_);
  evicted_ = state.evicted;
}

}  // namespace codedrift
