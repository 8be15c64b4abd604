// Code-table files on disk: reading with clear errors for what is not a table file, and atomic
// writes (temp file, fsync, rename, directory fsync) that fail with an Error, never a throw.
#include <cerrno>
#include <cstring>
#include <exception>
#include <string>

#include "codedrift/code_table.h"

#include <fcntl.h>
#include <sys/stat.h>
#include <unistd.h>

namespace codedrift {
namespace {

// Far beyond any real table (a 65536-symbol table is ~1 MiB); stops a wrong path to a huge
// file from eating memory.
constexpr size_t kMaxTableFileBytes = size_t{64} << 20;

std::string Reason(int error_number) { return std::strerror(error_number); }

// Closes on scope exit; -1 means nothing to close.
class FileDescriptor {
 public:
  explicit FileDescriptor(int fd) : fd_(fd) {}
  FileDescriptor(const FileDescriptor&) = delete;
  FileDescriptor& operator=(const FileDescriptor&) = delete;
  ~FileDescriptor() {
    if (fd_ >= 0) ::close(fd_);
  }
  int get() const { return fd_; }
  // Closes now and reports the result (close can report a delayed write error).
  int Close() {
    const int result = ::close(fd_);
    fd_ = -1;
    return result;
  }

 private:
  int fd_;
};

Status WriteAll(int fd, const std::string& text) {
  size_t written = 0;
  while (written < text.size()) {
    const ssize_t n = ::write(fd, text.data() + written, text.size() - written);
    if (n < 0) {
      if (errno == EINTR) continue;
      return Error{Reason(errno)};
    }
    written += static_cast<size_t>(n);
  }
  return Ok{};
}

}  // namespace

Result<CodeTable> LoadCodeTable(const std::string& path) {
  FileDescriptor file(::open(path.c_str(), O_RDONLY | O_CLOEXEC));
  if (file.get() < 0) return Error{path + ": cannot open: " + Reason(errno)};
  struct stat info {};
  if (::fstat(file.get(), &info) != 0) return Error{path + ": cannot stat: " + Reason(errno)};
  if (S_ISDIR(info.st_mode)) return Error{path + ": is a directory, not a code table file"};
  std::string text;
  char buffer[65536];
  while (true) {
    const ssize_t n = ::read(file.get(), buffer, sizeof buffer);
    if (n < 0) {
      if (errno == EINTR) continue;
      return Error{path + ": cannot read: " + Reason(errno)};
    }
    if (n == 0) break;
    if (text.size() + static_cast<size_t>(n) > kMaxTableFileBytes) {
      return Error{path + ": too large for a code table (over " +
                   std::to_string(kMaxTableFileBytes >> 20) + " MiB)"};
    }
    text.append(buffer, static_cast<size_t>(n));
  }
  return ParseCodeTable(text, path);
}

Status SaveCodeTable(const CodeTable& table, const std::string& path) {
  std::string text;
  try {
    text = FormatCodeTable(table);
  } catch (const std::exception& e) {
    return Error{path + ": cannot format the table: " + e.what()};
  }
  const size_t slash = path.rfind('/');
  const std::string directory = slash == std::string::npos ? "."
                                : slash == 0               ? "/"
                                                           : path.substr(0, slash);
  const std::string base = slash == std::string::npos ? path : path.substr(slash + 1);
  if (base.empty()) return Error{path + ": cannot write: the path names a directory"};
  // The temp file lives beside the target so that rename() stays within one file system.
  std::string temp = directory + "/." + base + ".tmp.XXXXXX";
  FileDescriptor file(::mkstemp(temp.data()));
  if (file.get() < 0) {
    return Error{path + ": cannot create a temporary file in " + directory + ": " + Reason(errno)};
  }
  auto fail = [&](const std::string& what, int error_number) -> Status {
    ::unlink(temp.c_str());
    return Error{path + ": " + what + ": " + Reason(error_number)};
  };
  // mkstemp creates 0600; a table is configuration that other users (the daemon) read.
  if (::fchmod(file.get(), 0644) != 0) return fail("cannot set permissions", errno);
  if (Status written = WriteAll(file.get(), text); !written.ok()) {
    ::unlink(temp.c_str());
    return Error{path + ": cannot write: " + written.error().message};
  }
  if (::fsync(file.get()) != 0) return fail("cannot sync", errno);
  if (file.Close() != 0) return fail("cannot write", errno);
  if (::rename(temp.c_str(), path.c_str()) != 0) return fail("cannot replace", errno);
  // Without syncing the directory a crash could forget the rename.
  FileDescriptor dir(::open(directory.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC));
  if (dir.get() < 0 || ::fsync(dir.get()) != 0) {
    return Error{path + ": written, but syncing directory " + directory +
                 " failed: " + Reason(errno)};
  }
  return Ok{};
}

}  // namespace codedrift
