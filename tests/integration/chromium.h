// Headless Chromium for browser tests (Debian's `chromium`): every run gets a fresh profile
// directory, background networking, sync and component updates are off, and every host name
// except 127.0.0.1 fails to resolve, so a page can reach nothing but loopback. Header-only (see
// child_process.h). Stateless functions, safe from one thread at a time per TempDir.
#pragma once

#include <cstdint>
#include <filesystem>
#include <fstream>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "child_process.h"
#include "harness.h"

namespace codedrift::testing {

struct BrowserRun {
  int exit_code = -1;
  std::string out;  // stdout: the DOM for DumpDom
  std::string log;  // stderr, for failure messages
};

// Whether Debian's chromium is on the PATH (.ci/deps.sh installs it).
inline bool ChromiumInstalled() { return RunCommand("command -v chromium").exit_code == 0; }

inline std::string ReadWholeFile(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream text;
  text << in.rdbuf();
  return text.str();
}

// Runs chromium with the isolating flags plus `extra` on `url`, in a new profile under
// `scratch`. `name` keeps the files of several runs apart.
inline BrowserRun RunChromium(const TempDir& scratch, const std::string& name,
                              const std::vector<std::string>& extra, const std::string& url) {
  const std::string profile = scratch.File(name + "-profile");
  std::error_code ignored;
  std::filesystem::create_directories(profile, ignored);
  std::vector<std::string> argv = {
      "chromium",
      "--headless",
      "--no-sandbox",  // tests may run as root, where the sandbox refuses to start
      "--disable-gpu",
      "--disable-background-networking",
      "--no-first-run",
      "--disable-component-update",
      "--disable-sync",
      "--disable-extensions",
      "--host-resolver-rules=MAP * ~NOTFOUND , EXCLUDE 127.0.0.1",
      "--user-data-dir=" + profile,
      "--force-device-scale-factor=1",
      "--hide-scrollbars",
  };
  argv.insert(argv.end(), extra.begin(), extra.end());
  argv.push_back(url);
  BrowserRun run;
  ChildProcess chromium(argv, scratch.File(name + ".out"), scratch.File(name + ".log"));
  run.exit_code = chromium.Wait(std::chrono::seconds(90));
  run.out = ReadWholeFile(scratch.File(name + ".out"));
  run.log = ReadWholeFile(scratch.File(name + ".log"));
  return run;
}

// The DOM after the page's scripts ran for `budget_ms` of virtual time (Chromium holds virtual
// time while network fetches are pending, so fetches started in that time complete).
inline BrowserRun DumpDom(const TempDir& scratch, const std::string& url, int budget_ms = 5000) {
  return RunChromium(scratch, "dump",
                     {"--virtual-time-budget=" + std::to_string(budget_ms), "--dump-dom"}, url);
}

inline BrowserRun Screenshot(const TempDir& scratch, const std::string& url,
                             const std::string& png_path, int width, int height,
                             int budget_ms = 5000) {
  return RunChromium(
      scratch, "shot-" + std::to_string(width),
      {"--virtual-time-budget=" + std::to_string(budget_ms), "--screenshot=" + png_path,
       "--window-size=" + std::to_string(width) + "," + std::to_string(height)},
      url);
}

struct PngSize {
  uint32_t width = 0;
  uint32_t height = 0;
};

// Width and height from a PNG's IHDR chunk (PNG spec, ISO/IEC 15948 section 11.2.2: the
// 8-byte signature, then the IHDR chunk whose data starts with two big-endian 32-bit values).
inline std::optional<PngSize> ReadPngSize(const std::string& path) {
  const std::string bytes = ReadWholeFile(path);
  static const std::string kSignature = "\x89PNG\r\n\x1a\n";
  if (bytes.size() < 24 || bytes.compare(0, 8, kSignature) != 0 ||
      bytes.compare(12, 4, "IHDR") != 0) {
    return std::nullopt;
  }
  const auto be32 = [&bytes](size_t at) {
    uint32_t v = 0;
    for (size_t i = 0; i < 4; ++i) v = (v << 8) | static_cast<unsigned char>(bytes[at + i]);
    return v;
  };
  return PngSize{be32(16), be32(20)};
}

}  // namespace codedrift::testing
