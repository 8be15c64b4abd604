// Reading captures (the files a CLI command analyses) as one stream: validation with clear
// errors, sequential 1 MiB reads, line splitting, and positioned reads for worker threads.
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <string_view>
#include <vector>

#include "codedrift/result.h"

namespace codedrift::cli {

// Size of every sequential read: large enough to amortise the system call, small enough to
// stay in cache while it is counted.
inline constexpr size_t kReadChunkBytes = size_t{1} << 20;

// One input file. Its size is taken when it is opened: a capture that grows meanwhile is read
// up to that size.
struct CaptureFile {
  std::string path;
  uint64_t size = 0;
  uint64_t stream_offset = 0;  // where the file starts in the concatenated stream
};

// The files of one command, open for reading, taken as one concatenated byte stream. Owns the
// descriptors (move-only). ReadAt, LineEndAt and ForEachLineBatch may be called from several
// threads at once; ForEachChunk is for one thread at a time.
class CaptureStream {
 public:
  // Checks every path: it exists, is a regular file (not a directory, pipe or device) and can
  // be opened for reading. Error: "PATH: reason".
  static Result<CaptureStream> Open(const std::vector<std::string>& paths);
  // Open, for the commands that count symbols: files that together hold no bytes are refused
  // too ("no symbols: the input is empty (0 bytes)").
  static Result<CaptureStream> OpenToCount(const std::vector<std::string>& paths);

  CaptureStream(CaptureStream&& other) noexcept;
  CaptureStream& operator=(CaptureStream&& other) noexcept;
  CaptureStream(const CaptureStream&) = delete;
  CaptureStream& operator=(const CaptureStream&) = delete;
  ~CaptureStream();

  const std::vector<CaptureFile>& files() const { return files_; }
  uint64_t size() const { return size_; }

  // Reads up to `length` bytes at `offset` of the stream (crossing file boundaries). Returns
  // the bytes read: fewer than `length` only at the end of the stream.
  Result<size_t> ReadAt(uint64_t offset, size_t length, char* out) const;

  // Calls `consume` with consecutive chunks (<= kReadChunkBytes each) of every file in
  // order. Stops early when `consume` returns false.
  Status ForEachChunk(const std::function<bool(std::string_view)>& consume) const;

  // Hands over the lines of the files in batches (one call per read chunk, so per-line
  // overhead stays off the hot path), each line with its '\n'. A file's last line may lack
  // the '\n' and is still a line: a line never spans two files. Long lines are reassembled.
  // `stream_end` is the stream offset just past the batch's last line. The views are valid
  // only during the call. Stops early when `consume` returns false.
  using LineBatchFn =
      std::function<bool(const std::vector<std::string_view>& lines, uint64_t stream_end)>;
  Status ForEachLineBatch(const LineBatchFn& consume) const;
  // The same over the stream range [begin, end), which should start at a line boundary; a
  // line cut by `end` is handed over cut. Positioned reads only: several threads may walk
  // disjoint ranges at once.
  Status ForEachLineBatch(const LineBatchFn& consume, uint64_t begin, uint64_t end) const;

  // The stream offset just past the line that holds byte `offset` (past its '\n', or the end
  // of its file); size() when `offset` is at or past the end.
  Result<uint64_t> LineEndAt(uint64_t offset) const;

 private:
  CaptureStream() = default;
  void Close();

  std::vector<CaptureFile> files_;
  std::vector<int> fds_;
  uint64_t size_ = 0;
};

}  // namespace codedrift::cli
