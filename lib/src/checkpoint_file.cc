// The checkpoint file: framing (magic, version, length, crc32) and the atomic write.
#include <cerrno>
#include <cstring>
#include <fstream>
#include <sstream>
#include <string>

#include <zlib.h>

#include "codedrift/checkpoint.h"

#include "checkpoint_bytes.h"
#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace codedrift {
namespace {

constexpr size_t kHeaderBytes = 4 + 4 + 8;
constexpr size_t kTrailerBytes = 4;

uint32_t Crc32(std::string_view bytes) {
  uLong crc = crc32(0L, Z_NULL, 0);
  // zlib takes uInt lengths: feed large payloads in pieces.
  constexpr size_t kPiece = 1u << 30;
  for (size_t at = 0; at < bytes.size(); at += kPiece) {
    const size_t n = std::min(kPiece, bytes.size() - at);
    crc = crc32(crc, reinterpret_cast<const Bytef*>(bytes.data() + at), static_cast<uInt>(n));
  }
  return static_cast<uint32_t>(crc);
}

std::string SystemError(const std::string& path, const char* what) {
  return path + ": " + what + ": " + std::strerror(errno);
}

// write(2) until done; false with errno set on failure.
bool WriteAll(int fd, std::string_view bytes) {
  while (!bytes.empty()) {
    const ssize_t n = ::write(fd, bytes.data(), bytes.size());
    if (n < 0) {
      if (errno == EINTR) continue;
      return false;
    }
    bytes.remove_prefix(static_cast<size_t>(n));
  }
  return true;
}

std::string DirectoryOf(const std::string& path) {
  const size_t slash = path.rfind('/');
  if (slash == std::string::npos) return ".";
  return slash == 0 ? "/" : path.substr(0, slash);
}

}  // namespace

const char* CheckpointProblemName(CheckpointProblem problem) {
  switch (problem) {
    case CheckpointProblem::kMissing:
      return "missing";
    case CheckpointProblem::kUnreadable:
      return "unreadable";
    case CheckpointProblem::kTruncated:
      return "truncated";
    case CheckpointProblem::kNotCheckpoint:
      return "not-checkpoint";
    case CheckpointProblem::kNewerFormat:
      return "newer-format";
    case CheckpointProblem::kOldFormat:
      return "old-format";
    case CheckpointProblem::kCorrupt:
      return "corrupt";
    case CheckpointProblem::kMalformed:
      return "malformed";
    case CheckpointProblem::kMismatch:
      return "mismatch";
    case CheckpointProblem::kInvalid:
      return "invalid";
  }
  return "unknown";
}

std::string EncodeCheckpointFile(std::string_view payload, uint32_t version) {
  std::string out;
  out.reserve(kHeaderBytes + payload.size() + kTrailerBytes);
  out += kCheckpointMagic;
  ByteWriter writer(out);
  writer.Fixed32(version);
  writer.Fixed64(payload.size());
  out += payload;
  writer.Fixed32(Crc32(payload));
  return out;
}

CheckpointResult<std::string> DecodeCheckpointFile(std::string_view file) {
  using P = CheckpointProblem;
  if (file.size() < kCheckpointMagic.size() || !file.starts_with(kCheckpointMagic)) {
    return CheckpointError{
        file.size() < kCheckpointMagic.size() ? P::kTruncated : P::kNotCheckpoint,
        "not a checkpoint file (no CDCK magic)"};
  }
  if (file.size() < kHeaderBytes + kTrailerBytes) {
    return CheckpointError{P::kTruncated, "truncated: " + std::to_string(file.size()) +
                                              " bytes, shorter than the header"};
  }
  ByteReader header(file.substr(kCheckpointMagic.size(), kHeaderBytes - kCheckpointMagic.size()));
  const uint32_t version = header.Fixed32();
  const uint64_t length = header.Fixed64();
  if (version > kCheckpointFormatVersion) {
    return CheckpointError{P::kNewerFormat, "format version " + std::to_string(version) +
                                                " is newer than this build reads (" +
                                                std::to_string(kCheckpointFormatVersion) + ")"};
  }
  if (version != kCheckpointFormatVersion) {
    return CheckpointError{P::kOldFormat,
                           "format version " + std::to_string(version) + " is not readable"};
  }
  const uint64_t held = file.size() - kHeaderBytes - kTrailerBytes;
  if (length != held) {
    return CheckpointError{length > held ? P::kTruncated : P::kCorrupt,
                           "header says " + std::to_string(length) + " payload bytes, file holds " +
                               std::to_string(held)};
  }
  const std::string_view payload = file.substr(kHeaderBytes, length);
  ByteReader trailer(file.substr(kHeaderBytes + length));
  const uint32_t stored = trailer.Fixed32();
  const uint32_t computed = Crc32(payload);
  if (stored != computed) {
    char text[96];
    std::snprintf(text, sizeof text, "crc32 mismatch: stored %08x, computed %08x", stored,
                  computed);
    return CheckpointError{P::kCorrupt, text};
  }
  return std::string(payload);
}

Status WriteFileAtomically(const std::string& path, std::string_view bytes) {
  const std::string temp = path + ".tmp";
  const int fd = ::open(temp.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd < 0) return Error{SystemError(temp, "cannot create")};
  const bool written = WriteAll(fd, bytes);
  const int write_errno = errno;
  const bool synced = written && ::fsync(fd) == 0;
  const int sync_errno = errno;
  ::close(fd);
  if (!written || !synced) {
    errno = written ? sync_errno : write_errno;
    Error error{SystemError(temp, written ? "fsync failed" : "write failed")};
    ::unlink(temp.c_str());
    return error;
  }
  if (::rename(temp.c_str(), path.c_str()) != 0) {
    Error error{SystemError(path, "cannot rename the temporary file over it")};
    ::unlink(temp.c_str());
    return error;
  }
  // The rename is durable only once the directory entry is.
  const std::string directory = DirectoryOf(path);
  const int dir_fd = ::open(directory.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (dir_fd < 0) return Error{SystemError(directory, "cannot open the directory to fsync it")};
  const bool dir_synced = ::fsync(dir_fd) == 0;
  Error error{dir_synced ? "" : SystemError(directory, "directory fsync failed")};
  ::close(dir_fd);
  if (!dir_synced) return error;
  return Ok{};
}

Status WriteModelCheckpoint(const std::string& path, const ModelCheckpoint& checkpoint) {
  return WriteFileAtomically(path, EncodeCheckpointFile(EncodeModelCheckpoint(checkpoint)));
}

CheckpointResult<ModelCheckpoint> ReadModelCheckpoint(const std::string& path,
                                                      std::string_view identity) {
  std::ifstream in(path, std::ios::binary);
  if (!in) {
    struct stat info {};
    if (::stat(path.c_str(), &info) != 0 && errno == ENOENT) {
      return CheckpointError{CheckpointProblem::kMissing, path + ": no checkpoint"};
    }
    return CheckpointError{CheckpointProblem::kUnreadable, SystemError(path, "cannot read")};
  }
  std::ostringstream buffer;
  buffer << in.rdbuf();
  if (in.bad()) {
    return CheckpointError{CheckpointProblem::kUnreadable, path + ": read failed"};
  }
  auto payload = DecodeCheckpointFile(buffer.str());
  if (!payload.ok()) {
    return CheckpointError{payload.error().problem, path + ": " + payload.error().message};
  }
  auto checkpoint = DecodeModelCheckpoint(payload.value());
  if (!checkpoint.ok()) {
    return CheckpointError{checkpoint.error().problem, path + ": " + checkpoint.error().message};
  }
  if (checkpoint.value().identity != identity) {
    return CheckpointError{CheckpointProblem::kMismatch,
                           path + ": written for another model definition (" +
                               checkpoint.value().identity + "; now " + std::string(identity) +
                               ")"};
  }
  return checkpoint;
}

}  // namespace codedrift
