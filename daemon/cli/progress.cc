#include "progress.h"

#include <cstdio>
#include <utility>

#include <unistd.h>

namespace codedrift::cli {
namespace {

constexpr int64_t kRedrawIntervalNs = 100'000'000;
constexpr int kBarWidth = 30;

int64_t NowNs() {
  return std::chrono::duration_cast<std::chrono::nanoseconds>(
             std::chrono::steady_clock::now().time_since_epoch())
      .count();
}

}  // namespace

Progress::Progress(std::string label, uint64_t total_bytes)
    : Progress(std::move(label), total_bytes,
               total_bytes > kProgressMinBytes && ::isatty(STDERR_FILENO) == 1) {}

Progress::Progress(std::string label, uint64_t total_bytes, bool enabled)
    : enabled_(enabled),
      label_(std::move(label)),
      total_(total_bytes),
      start_(std::chrono::steady_clock::now()) {}

Progress::~Progress() { Finish(); }

void Progress::Advance(uint64_t bytes) {
  if (!enabled_) return;
  const uint64_t done = done_.fetch_add(bytes, std::memory_order_relaxed) + bytes;
  const int64_t now = NowNs();
  int64_t due = next_draw_ns_.load(std::memory_order_relaxed);
  if (now < due) return;
  if (!next_draw_ns_.compare_exchange_strong(due, now + kRedrawIntervalNs)) return;
  Draw(done);
}

void Progress::Restart(std::string label, uint64_t total_bytes) {
  if (!enabled_) return;
  std::lock_guard<std::mutex> lock(draw_mutex_);
  label_ = std::move(label);
  total_.store(total_bytes);
  done_.store(0);
  start_ = std::chrono::steady_clock::now();
}

void Progress::Draw(uint64_t done) {
  std::unique_lock<std::mutex> lock(draw_mutex_, std::try_to_lock);
  if (!lock.owns_lock()) return;
  const uint64_t total = total_.load();
  const double fraction = total == 0 ? 1.0 : std::min(1.0, static_cast<double>(done) / total);
  const int filled = static_cast<int>(fraction * kBarWidth);
  const double seconds =
      std::chrono::duration<double>(std::chrono::steady_clock::now() - start_).count();
  const double mb_per_s = seconds > 0 ? static_cast<double>(done) / seconds / 1e6 : 0.0;
  std::string bar(static_cast<size_t>(filled), '#');
  bar.resize(kBarWidth, '.');
  std::fprintf(stderr, "\r%s [%s] %5.1f%%  %.0f MB/s ", label_.c_str(), bar.c_str(),
               100.0 * fraction, mb_per_s);
  std::fflush(stderr);
  drawn_ = true;
}

void Progress::Finish() {
  if (!enabled_) return;
  std::lock_guard<std::mutex> lock(draw_mutex_);
  if (drawn_) {
    std::fprintf(stderr, "\r%*s\r", 72, "");
    std::fflush(stderr);
    drawn_ = false;
  }
}

}  // namespace codedrift::cli
