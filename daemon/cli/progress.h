// A progress bar on stderr for long offline passes: shown only when stderr is a terminal and
// the input is large, so pipes, logs and expected-output tests never see it.
#pragma once

#include <atomic>
#include <chrono>
#include <cstdint>
#include <mutex>
#include <string>

namespace codedrift::cli {

// Inputs above this size get a progress bar (when stderr is a terminal).
inline constexpr uint64_t kProgressMinBytes = uint64_t{64} << 20;

// Counts processed bytes from any number of threads and redraws at most ten times a second.
// Thread-safe; drawing is serialised by an internal mutex that no hot path waits on (a
// thread that finds it taken skips the redraw).
class Progress {
 public:
  // Enabled when `total_bytes` > kProgressMinBytes and stderr is a terminal.
  Progress(std::string label, uint64_t total_bytes);
  // Forced on or off (tests, callers that know better).
  Progress(std::string label, uint64_t total_bytes, bool enabled);
  ~Progress();  // clears the bar

  bool enabled() const { return enabled_; }
  void Advance(uint64_t bytes);
  // Starts a new phase with its own total (e.g. a second pass), keeping the bar.
  void Restart(std::string label, uint64_t total_bytes);
  void Finish();

 private:
  void Draw(uint64_t done);

  bool enabled_;
  std::string label_;
  std::atomic<uint64_t> total_;
  std::atomic<uint64_t> done_{0};
  std::atomic<int64_t> next_draw_ns_{0};
  std::chrono::steady_clock::time_point start_;
  std::mutex draw_mutex_;
  bool drawn_ = false;  // guarded by draw_mutex_
};

}  // namespace codedrift::cli
