#include "capture_reader.h"

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <utility>

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace codedrift::cli {
namespace {

Error FileError(const std::string& path, const std::string& reason) {
  return Error{path + ": " + reason};
}

// read() until `length` bytes or the end of the file; retries interrupted calls.
Result<size_t> ReadFully(int fd, const std::string& path, char* out, size_t length) {
  size_t done = 0;
  while (done < length) {
    const ssize_t n = ::read(fd, out + done, length - done);
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) return FileError(path, std::strerror(errno));
    if (n == 0) break;
    done += static_cast<size_t>(n);
  }
  return done;
}

Result<size_t> PreadFully(int fd, const std::string& path, char* out, size_t length,
                          uint64_t offset) {
  size_t done = 0;
  while (done < length) {
    const ssize_t n = ::pread(fd, out + done, length - done, static_cast<off_t>(offset + done));
    if (n < 0 && errno == EINTR) continue;
    if (n < 0) return FileError(path, std::strerror(errno));
    if (n == 0) break;
    done += static_cast<size_t>(n);
  }
  return done;
}

}  // namespace

Result<CaptureStream> CaptureStream::Open(const std::vector<std::string>& paths) {
  CaptureStream stream;
  for (const std::string& path : paths) {
    const int fd = ::open(path.c_str(), O_RDONLY | O_CLOEXEC);
    if (fd < 0) return FileError(path, std::string("cannot open: ") + std::strerror(errno));
    stream.fds_.push_back(fd);  // closed by the destructor, also on the error paths below
    struct stat info {};
    if (::fstat(fd, &info) != 0) return FileError(path, std::strerror(errno));
    if (S_ISDIR(info.st_mode)) return FileError(path, "is a directory, not a capture file");
    if (!S_ISREG(info.st_mode)) {
      return FileError(path, "is not a regular file (pipes and devices are not supported)");
    }
    stream.files_.push_back({path, static_cast<uint64_t>(info.st_size), stream.size_});
    stream.size_ += static_cast<uint64_t>(info.st_size);
    // Sequential hint: the kernel reads ahead further. Failure only costs speed.
    (void)::posix_fadvise(fd, 0, 0, POSIX_FADV_SEQUENTIAL);
  }
  return stream;
}

Result<CaptureStream> CaptureStream::OpenToCount(const std::vector<std::string>& paths) {
  auto stream = Open(paths);
  if (stream.ok() && stream.value().size() == 0) {
    return Error{"no symbols: the input is empty (0 bytes)"};
  }
  return stream;
}

CaptureStream::CaptureStream(CaptureStream&& other) noexcept
    : files_(std::move(other.files_)), fds_(std::move(other.fds_)), size_(other.size_) {
  other.fds_.clear();
}

CaptureStream& CaptureStream::operator=(CaptureStream&& other) noexcept {
  if (this != &other) {
    Close();
    files_ = std::move(other.files_);
    fds_ = std::move(other.fds_);
    size_ = other.size_;
    other.fds_.clear();
  }
  return *this;
}

CaptureStream::~CaptureStream() { Close(); }

void CaptureStream::Close() {
  for (const int fd : fds_) ::close(fd);
  fds_.clear();
}

Result<size_t> CaptureStream::ReadAt(uint64_t offset, size_t length, char* out) const {
  size_t done = 0;
  for (size_t i = 0; i < files_.size() && done < length; ++i) {
    const CaptureFile& file = files_[i];
    const uint64_t position = offset + done;
    if (position >= file.stream_offset + file.size) continue;
    const uint64_t local = position - file.stream_offset;
    const size_t want = static_cast<size_t>(std::min<uint64_t>(length - done, file.size - local));
    auto got = PreadFully(fds_[i], file.path, out + done, want, local);
    if (!got.ok()) return got.error();
    done += got.value();
    if (got.value() < want) break;  // the file shrank since it was opened
  }
  return done;
}

Status CaptureStream::ForEachChunk(const std::function<bool(std::string_view)>& consume) const {
  std::vector<char> buffer(kReadChunkBytes);
  for (size_t i = 0; i < files_.size(); ++i) {
    uint64_t left = files_[i].size;
    if (::lseek(fds_[i], 0, SEEK_SET) < 0) return FileError(files_[i].path, std::strerror(errno));
    while (left > 0) {
      const size_t want = static_cast<size_t>(std::min<uint64_t>(left, buffer.size()));
      auto got = ReadFully(fds_[i], files_[i].path, buffer.data(), want);
      if (!got.ok()) return got.error();
      if (got.value() == 0) break;
      left -= got.value();
      if (!consume(std::string_view(buffer.data(), got.value()))) return Ok{};
    }
  }
  return Ok{};
}

Status CaptureStream::ForEachLineBatch(const LineBatchFn& consume) const {
  return ForEachLineBatch(consume, 0, size_);
}

Status CaptureStream::ForEachLineBatch(const LineBatchFn& consume, uint64_t begin,
                                       uint64_t end) const {
  std::vector<char> buffer(kReadChunkBytes);
  std::vector<std::string_view> lines;
  for (size_t i = 0; i < files_.size(); ++i) {
    const CaptureFile& file = files_[i];
    const uint64_t file_end = file.stream_offset + file.size;
    if (file_end <= begin || file.stream_offset >= end) continue;
    uint64_t next = std::max(begin, file.stream_offset);  // stream offset of the next read
    const uint64_t stop = std::min(end, file_end);
    uint64_t consumed = next;  // stream offset of buffer[0]
    size_t carry = 0;          // bytes of an unfinished line at buffer[0]
    while (true) {
      if (carry == buffer.size()) buffer.resize(buffer.size() * 2);  // a very long line
      const size_t want =
          static_cast<size_t>(std::min<uint64_t>(stop - next, buffer.size() - carry));
      auto got =
          PreadFully(fds_[i], file.path, buffer.data() + carry, want, next - file.stream_offset);
      if (!got.ok()) return got.error();
      next += got.value();
      const size_t filled = carry + got.value();
      const bool at_end = got.value() < want || next == stop;

      lines.clear();
      const char* line = buffer.data();
      const char* const filled_end = buffer.data() + filled;
      while (line != filled_end) {
        const void* newline = std::memchr(line, '\n', static_cast<size_t>(filled_end - line));
        if (newline == nullptr) break;
        const char* const after = static_cast<const char*>(newline) + 1;
        lines.emplace_back(line, static_cast<size_t>(after - line));
        line = after;
      }
      if (at_end && line != filled_end) {  // the range's (or file's) last line has no '\n'
        lines.emplace_back(line, static_cast<size_t>(filled_end - line));
        line = filled_end;
      }
      const size_t used = static_cast<size_t>(line - buffer.data());
      if (!lines.empty() && !consume(lines, consumed + used)) return Ok{};
      consumed += used;
      carry = filled - used;
      if (carry > 0) std::memmove(buffer.data(), line, carry);
      if (at_end) break;
    }
  }
  return Ok{};
}

Result<uint64_t> CaptureStream::LineEndAt(uint64_t offset) const {
  if (offset >= size_) return size_;
  for (const CaptureFile& file : files_) {
    const uint64_t file_end = file.stream_offset + file.size;
    if (offset >= file_end) continue;
    std::vector<char> buffer(size_t{64} << 10);
    for (uint64_t position = offset; position < file_end;) {
      const size_t want =
          static_cast<size_t>(std::min<uint64_t>(buffer.size(), file_end - position));
      auto got = ReadAt(position, want, buffer.data());
      if (!got.ok()) return got.error();
      if (got.value() == 0) break;
      const void* newline = std::memchr(buffer.data(), '\n', got.value());
      if (newline != nullptr) {
        return position + static_cast<uint64_t>(static_cast<const char*>(newline) - buffer.data()) +
               1;
      }
      position += got.value();
    }
    return file_end;  // a line never spans two files
  }
  return size_;
}

}  // namespace codedrift::cli
