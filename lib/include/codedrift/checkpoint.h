// Checkpoints: one model's whole state (window, counters, evaluator, code state, history) in a
// versioned binary file of our own, written atomically, so a restarted daemon resumes where the
// last checkpoint left off and a damaged or foreign file is recognised, never trusted.
//
// File layout (integers little-endian):
//   "CDCK"            4 bytes, magic
//   format version    u32 (kCheckpointFormatVersion)
//   payload length    u64
//   payload           the model checkpoint (EncodeModelCheckpoint)
//   crc32             u32, zlib's crc32 of the payload
// Every single-bit error is caught: in the payload or crc by the crc32, in the header by the
// magic, the version or the length (which must match the file size exactly).
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <utility>
#include <variant>

#include "codedrift/clock.h"
#include "codedrift/code_state.h"
#include "codedrift/evaluator.h"
#include "codedrift/history.h"
#include "codedrift/model.h"
#include "codedrift/result.h"

namespace codedrift {

inline constexpr uint32_t kCheckpointFormatVersion = 1;
inline constexpr std::string_view kCheckpointMagic = "CDCK";

// Why a checkpoint was not restored. The name (CheckpointProblemName) goes into the name of
// the set-aside file.
enum class CheckpointProblem {
  kMissing,        // no file: a fresh start, nothing to set aside
  kUnreadable,     // the file exists but cannot be read
  kTruncated,      // shorter than its header says
  kNotCheckpoint,  // no magic
  kNewerFormat,    // written by a newer codedrift: refused, never guessed at
  kOldFormat,      // a format version this build does not read
  kCorrupt,        // crc mismatch or bytes after the payload
  kMalformed,      // the crc holds but the payload does not parse
  kMismatch,       // written for another model definition
  kInvalid,        // parses, but does not fit the model (ids beyond the symbolizer, sizes)
};
const char* CheckpointProblemName(CheckpointProblem problem);

struct CheckpointError {
  CheckpointProblem problem = CheckpointProblem::kCorrupt;
  std::string message;
};

// A value or a CheckpointError (Result<T> with a problem kind). Check ok() before value().
template <class T>
class [[nodiscard]] CheckpointResult {
 public:
  CheckpointResult(T value) : data_(std::move(value)) {}  // NOLINT(google-explicit-constructor)
  CheckpointResult(CheckpointError error)                 // NOLINT(google-explicit-constructor)
      : data_(std::move(error)) {}

  bool ok() const { return std::holds_alternative<T>(data_); }
  const T& value() const& { return std::get<T>(data_); }
  T& value() & { return std::get<T>(data_); }
  T&& value() && { return std::get<T>(std::move(data_)); }
  const CheckpointError& error() const { return std::get<CheckpointError>(data_); }

 private:
  std::variant<T, CheckpointError> data_;
};

// The definition a checkpoint belongs to, as canonical text: stream, model name, symbolizer
// options and window spec. A checkpoint restores only into a model with the same identity.
std::string ModelIdentity(std::string_view stream, std::string_view model,
                          const SymbolizerSpec& symbolizer, const WindowSpec& window);

// One instant on both clocks: wall time survives a restart, the steady clock does not.
struct CheckpointTime {
  int64_t unix_ns = 0;
  int64_t steady_ns = 0;
};
CheckpointTime CheckpointTimeNow(const Clock& steady);

// Add this to a steady time of the writer to get the same instant on the reader's steady
// clock: the wall time elapsed since `written` (taken as zero if the wall clock went back)
// is subtracted from the reader's steady `now`.
std::chrono::nanoseconds SteadyShift(const CheckpointTime& written, const CheckpointTime& now);

// A code state machine's timers and counters; times on the writer's steady clock.
struct CodeStateSnapshot {
  CodeState state = CodeState::kFit;
  std::chrono::nanoseconds entered_at{0};
  std::optional<std::chrono::nanoseconds> condition_since;
  std::optional<std::chrono::nanoseconds> last_alert;
  uint64_t alerts = 0;
};
CodeStateSnapshot SnapshotOf(const CodeStateMachine& machine);
void RestoreFrom(const CodeStateSnapshot& snapshot, CodeStateMachine& machine);

// Everything one model's checkpoint holds.
struct ModelCheckpoint {
  std::string identity;  // ModelIdentity of the model written
  CheckpointTime written;
  ModelState model;
  EvaluatorState evaluator;
  CodeStateSnapshot code_state;
  double state_since_unix = 0;  // wall time the code state was entered (API)
  std::string latest_proposal;  // path of the newest proposal written, empty if none
  HistoryState history;
};

// Moves every steady-clock time in the checkpoint by `shift` (see SteadyShift).
void ShiftSteadyTimes(ModelCheckpoint& checkpoint, std::chrono::nanoseconds shift);

// The payload and back. Decoding checks every length against the bytes left, so a hostile
// payload costs no more memory than its own size.
std::string EncodeModelCheckpoint(const ModelCheckpoint& checkpoint);
CheckpointResult<ModelCheckpoint> DecodeModelCheckpoint(std::string_view payload);

// The file framing around a payload and back (magic, version, length, crc32).
std::string EncodeCheckpointFile(std::string_view payload,
                                 uint32_t version = kCheckpointFormatVersion);
CheckpointResult<std::string> DecodeCheckpointFile(std::string_view file);

// Writes `bytes` to `path` so that a crash leaves either the old file or the new one: a
// temporary file beside it, fsync, rename over `path`, fsync of the directory. The directory
// must exist. Errors name the path and the system's reason.
Status WriteFileAtomically(const std::string& path, std::string_view bytes);

// Encodes, frames and writes atomically.
Status WriteModelCheckpoint(const std::string& path, const ModelCheckpoint& checkpoint);
// Reads, checks the framing, decodes, and checks the identity (kMismatch when it differs).
CheckpointResult<ModelCheckpoint> ReadModelCheckpoint(const std::string& path,
                                                      std::string_view identity);

}  // namespace codedrift
