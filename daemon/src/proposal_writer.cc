#include "proposal_writer.h"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <ctime>
#include <filesystem>
#include <system_error>
#include <vector>

#include <zlib.h>

namespace codedrift {
namespace fs = std::filesystem;

std::string LengthsChecksum(const CodeTable& table) {
  std::string text;
  for (const auto& [key, length] : table.lengths) {
    text += table.alphabet.FormatKey(key) + " " + std::to_string(length) + "\n";
  }
  if (table.escape) text += "escape " + std::to_string(table.escape->length) + "\n";
  const uLong crc =
      crc32(0L, reinterpret_cast<const Bytef*>(text.data()), static_cast<uInt>(text.size()));
  char hex[16];
  std::snprintf(hex, sizeof hex, "%08lx", crc);
  return hex;
}

namespace {

// 20261201T221300.123Z: sorts by time, safe in file names.
std::string FileStamp(std::chrono::system_clock::time_point now) {
  const std::time_t seconds = std::chrono::system_clock::to_time_t(now);
  const auto millis =
      std::chrono::duration_cast<std::chrono::milliseconds>(now.time_since_epoch()).count() % 1000;
  std::tm utc{};
  gmtime_r(&seconds, &utc);
  char text[40];
  std::strftime(text, sizeof text, "%Y%m%dT%H%M%S", &utc);
  char out[48];
  std::snprintf(out, sizeof out, "%s.%03lldZ", text, static_cast<long long>(millis));
  return out;
}

std::string IsoTime(std::chrono::system_clock::time_point now) {
  const std::time_t seconds = std::chrono::system_clock::to_time_t(now);
  std::tm utc{};
  gmtime_r(&seconds, &utc);
  char text[40];
  std::strftime(text, sizeof text, "%Y-%m-%dT%H:%M:%SZ", &utc);
  return text;
}

}  // namespace

Result<WrittenProposal> ProposalWriter::Write(const std::string& stream, const std::string& model,
                                              CodeTable table) {
  std::lock_guard lock(mutex_);
  const auto now = std::chrono::system_clock::now();
  const fs::path dir = fs::path(state_dir_) / "proposals" / stream / model;
  std::error_code ec;
  fs::create_directories(dir, ec);
  if (ec) return Error{"cannot create " + dir.string() + ": " + ec.message()};
  WrittenProposal written;
  written.checksum = LengthsChecksum(table);
  table.metadata["created"] = IsoTime(now);
  table.metadata["checksum"] = written.checksum;
  written.path = (dir / (FileStamp(now) + ".table")).string();
  if (auto saved = SaveCodeTable(table, written.path); !saved.ok()) return saved.error();

  std::vector<fs::path> existing;
  for (const auto& entry : fs::directory_iterator(dir, ec)) {
    if (entry.path().extension() == ".table") existing.push_back(entry.path());
  }
  std::sort(existing.begin(), existing.end());
  for (size_t i = 0; i + keep_ < existing.size(); ++i) fs::remove(existing[i], ec);
  return written;
}

}  // namespace codedrift
