#include "checkpointer.h"

#include <ctime>
#include <filesystem>
#include <system_error>

#include <spdlog/spdlog.h>

namespace codedrift {
namespace {

namespace fs = std::filesystem;

constexpr auto kFailureLogEvery = std::chrono::minutes(1);

std::string UtcStamp() {
  const std::time_t now = std::time(nullptr);
  std::tm utc{};
  ::gmtime_r(&now, &utc);
  char text[32];
  std::strftime(text, sizeof text, "%Y%m%dT%H%M%SZ", &utc);
  return text;
}

std::string IdentityOf(const ModelRuntime& model) {
  return ModelIdentity(model.stream(), model.name(), ToSymbolizerSpec(model.config().symbols),
                       ToWindowSpec(model.config().window));
}

uint64_t WindowSymbols(const WindowState& window) {
  switch (window.kind) {
    case WindowStateKind::kByteRing:
      return window.bytes.size();
    case WindowStateKind::kIdRing:
      return window.ids.size();
    case WindowStateKind::kBuckets: {
      uint64_t total = 0;
      for (const auto& bucket : window.buckets) {
        for (uint64_t c : bucket) total += c;
      }
      return total;
    }
    case WindowStateKind::kNone:
      break;
  }
  return 0;
}

}  // namespace

Checkpointer::Checkpointer(std::string state_dir, const Clock& clock)
    : state_dir_(std::move(state_dir)), clock_(clock), last_round_(clock.Now()) {}

std::string Checkpointer::PathOf(const std::string& stream, const std::string& model) const {
  return (fs::path(state_dir_) / "checkpoints" / stream / (model + ".ckpt")).string();
}

size_t Checkpointer::Restore(const std::vector<std::shared_ptr<ModelRuntime>>& models) {
  size_t restored = 0;
  for (const auto& model : models) {
    const std::string path = PathOf(model->stream(), model->name());
    const std::string label = model->stream() + "/" + model->name();
    auto read = ReadModelCheckpoint(path, IdentityOf(*model));
    if (!read.ok()) {
      if (read.error().problem != CheckpointProblem::kMissing) SetAside(path, label, read.error());
      continue;
    }
    ModelCheckpoint& checkpoint = read.value();
    const CheckpointTime now = CheckpointTimeNow(clock_);
    const double age_seconds = static_cast<double>(now.unix_ns - checkpoint.written.unix_ns) / 1e9;
    ShiftSteadyTimes(checkpoint, SteadyShift(checkpoint.written, now));
    std::error_code ec;
    if (!checkpoint.latest_proposal.empty() && !fs::exists(checkpoint.latest_proposal, ec)) {
      checkpoint.latest_proposal.clear();  // removed since: do not serve a missing file
    }
    if (auto imported = model->ImportCheckpoint(checkpoint); !imported.ok()) {
      SetAside(
          path, label,
          CheckpointError{CheckpointProblem::kInvalid, path + ": " + imported.error().message});
      continue;
    }
    ++restored;
    spdlog::info(
        "{}: restored from {} (written {:.1f} s ago: {} window symbols, {} symbols in total, {} "
        "history points)",
        label, path, age_seconds, WindowSymbols(checkpoint.model.window),
        checkpoint.model.symbols_total,
        checkpoint.history.coarse.size() + checkpoint.history.fine.size());
  }
  return restored;
}

void Checkpointer::SetAside(const std::string& path, const std::string& label,
                            const CheckpointError& error) {
  std::string aside = path + ".bad-" + CheckpointProblemName(error.problem) + "-" + UtcStamp();
  std::error_code ec;
  for (int n = 2; fs::exists(aside, ec) && n < 100; ++n) {
    aside = path + ".bad-" + CheckpointProblemName(error.problem) + "-" + UtcStamp() + "-" +
            std::to_string(n);
  }
  fs::rename(path, aside, ec);
  if (ec) {
    spdlog::error("{}: checkpoint not restored ({}), and it could not be set aside: {}", label,
                  error.message, ec.message());
    return;
  }
  spdlog::warn("{}: checkpoint not restored: {}; set aside as {}", label, error.message, aside);
}

Status Checkpointer::WriteOne(ModelRuntime& model) {
  const fs::path path = PathOf(model.stream(), model.name());
  std::error_code ec;
  fs::create_directories(path.parent_path(), ec);
  if (ec) return Error{path.parent_path().string() + ": cannot create: " + ec.message()};
  ModelCheckpoint checkpoint = model.ExportCheckpoint();
  checkpoint.identity = IdentityOf(model);
  checkpoint.written = CheckpointTimeNow(clock_);
  return WriteModelCheckpoint(path.string(), checkpoint);
}

void Checkpointer::WriteIfDue(const std::vector<std::shared_ptr<ModelRuntime>>& models,
                              std::chrono::nanoseconds interval) {
  if (clock_.Now() - last_round_ < interval) return;
  WriteAll(models);
}

bool Checkpointer::WriteAll(const std::vector<std::shared_ptr<ModelRuntime>>& models) {
  last_round_ = clock_.Now();
  size_t failed = 0;
  for (const auto& model : models) {
    if (auto written = WriteOne(*model); !written.ok()) {
      ++failed;
      ++failures_;
      ReportFailure(model->stream() + "/" + model->name() + ": " + written.error().message);
    }
  }
  if (failed == 0 && (failing_ || !announced_)) {
    spdlog::info("{} {} model(s) under {}",
                 failing_ ? "checkpoints written again:" : "checkpoints written:", models.size(),
                 (fs::path(state_dir_) / "checkpoints").string());
    failing_ = false;
    announced_ = true;
  }
  if (failed > 0) failing_ = true;
  return failed == 0;
}

void Checkpointer::ReportFailure(const std::string& message) {
  const auto now = clock_.Now();
  if (last_failure_log_ && now - *last_failure_log_ < kFailureLogEvery) {
    ++failures_unlogged_;
    return;
  }
  const uint64_t quiet = failures_unlogged_;
  failures_unlogged_ = 0;
  last_failure_log_ = now;
  spdlog::error("checkpoint not written, retrying at the next interval{}: {}",
                quiet > 0 ? " (" + std::to_string(quiet) + " more failures not logged)" : "",
                message);
}

}  // namespace codedrift
