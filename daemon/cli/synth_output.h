// Where `codedrift synth` writes records: stdout ("-"), a file, a TCP connection (lines, as
// they are) or UDP (one datagram per record, its newline dropped).
#pragma once

#include <memory>
#include <string>
#include <string_view>

#include "codedrift/result.h"

#include "replay_target.h"

namespace codedrift::cli {

// One open destination. Buffers internally: call Flush before waiting and at the end. Owns its
// file or socket; not thread-safe.
class RecordOutput {
 public:
  virtual ~RecordOutput() = default;
  // `record` ends with '\n'. Returns the bytes that went out for it.
  virtual Result<size_t> Write(std::string_view record) = 0;
  virtual Status Flush() = 0;
  // True for tcp:// and udp:// (paced in real time by default).
  virtual bool is_socket() const = 0;
  // True when the reader went away (a closed pipe on stdout): the caller stops quietly.
  virtual bool reader_gone() const { return false; }
  virtual std::string name() const = 0;
};

// A parsed --to: "-" (stdout), tcp://HOST:PORT, udp://HOST:PORT or a file path.
struct OutputAddress {
  enum class Kind { kStdout, kFile, kSocket };
  Kind kind = Kind::kStdout;
  std::string path;     // kFile
  ReplayTarget target;  // kSocket
};
// Errors here are usage errors: an unknown scheme ("tpc://...") is refused rather than taken
// for a file name.
Result<OutputAddress> ParseOutputAddress(const std::string& to);

// Opens the destination (a file is created or truncated; tcp connects). Errors are I/O errors.
Result<std::unique_ptr<RecordOutput>> OpenRecordOutput(const OutputAddress& address);

}  // namespace codedrift::cli
