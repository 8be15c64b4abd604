// Fuzz target: the daemon config loader (ParseDaemonConfig).
// Property: any text either parses into a config that keeps the documented invariants (at least
// one stream, names of [a-z0-9_-]{1,64}, limits in range, at least one model per stream), or
// fails with a report whose every line reads "file:line:column: reason" at a line of the text,
// at most 50 such lines plus one "(N more errors not shown)". It never crashes, hangs or
// throws.
#include <string>

#include "codedrift/daemon_config.h"

#include "fuzz_check.h"
#include "fuzz_text.h"

namespace codedrift::fuzz {
namespace {

constexpr std::string_view kFileName = "fuzz/codedrift.yaml";

bool IsName(const std::string& s) {
  if (s.empty() || s.size() > 64) return false;
  for (char c : s) {
    if (!((c >= 'a' && c <= 'z') || (c >= '0' && c <= '9') || c == '_' || c == '-')) return false;
  }
  return true;
}

void CheckReport(std::string_view report, std::string_view text) {
  FUZZ_CHECK(!report.empty());
  size_t lines = 0;
  while (!report.empty()) {
    const size_t newline = report.find('\n');
    const std::string_view line = report.substr(0, newline);
    report = newline == std::string_view::npos ? std::string_view() : report.substr(newline + 1);
    ++lines;
    if (line.front() == '(') {  // the cap's note comes last
      FUZZ_CHECK(report.empty() && line.ends_with(" more errors not shown)"));
      break;
    }
    if (!HasPosition(line, kFileName, text, /*with_column=*/true)) {
      std::fprintf(stderr, "unpositioned error line: %.*s\n", static_cast<int>(line.size()),
                   line.data());
      FUZZ_CHECK(false);
    }
  }
  FUZZ_CHECK(lines <= 51);
}

void CheckConfig(const DaemonConfig& config) {
  FUZZ_CHECK(!config.streams.empty() && config.streams.size() <= kMaxStreams);
  for (const StreamConfig& stream : config.streams) {
    FUZZ_CHECK(IsName(stream.name));
    FUZZ_CHECK(stream.max_record_bytes >= 1 && stream.max_record_bytes <= kMaxRecordBytesLimit);
    FUZZ_CHECK(!stream.models.empty() && stream.models.size() <= kMaxModelsPerStream);
    FUZZ_CHECK(stream.allow.size() <= kMaxAllowRules);
    for (const ModelConfig& model : stream.models) {
      FUZZ_CHECK(IsName(model.name));
      FUZZ_CHECK(!model.orders.empty());
      for (int order : model.orders) FUZZ_CHECK(order >= 1 && order <= kMaxBlockOrder);
      // The symbolizer factory accepts every validated config (it returns nullptr otherwise).
      if (model.symbols.kind == AlphabetKind::kBytes) {
        FUZZ_CHECK(model.symbols.block >= 1 && model.symbols.block <= 4);
      }
      if (model.symbols.kind == AlphabetKind::kField) {
        FUZZ_CHECK(model.symbols.field.width_bits >= 1 && model.symbols.field.width_bits <= 32);
      }
    }
  }
}

}  // namespace
}  // namespace codedrift::fuzz

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  const Result<DaemonConfig> config = ParseDaemonConfig(text, kFileName);
  if (config.ok()) {
    CheckConfig(config.value());
  } else {
    CheckReport(config.error().message, text);
  }
  return 0;
}
