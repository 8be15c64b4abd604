// The schema walk of the daemon config, split by section. Internal to the library.
#pragma once

#include <filesystem>
#include <optional>
#include <string>

#include "codedrift/daemon_config.h"

#include "daemon_config_reader.h"

namespace codedrift {

// What every section reader needs: where to report, and where relative paths start.
struct ConfigContext {
  ConfigDiagnostics& diagnostics;
  std::filesystem::path base_dir;  // empty: relative paths stay relative

  std::string ResolvePath(const std::string& path) const;
};

// A stream and where its identifying keys were, for checks across streams.
struct ParsedStream {
  StreamConfig config;
  SourcePosition name_position;
  SourcePosition listen_position;
  bool listen_ok = false;  // `listen` parsed (conflict checks skip it otherwise)
};

// Reads one item of `streams`, its models included. Empty when it is unusable (reported).
std::optional<ParsedStream> ReadStream(const ConfigEntry& entry, const ConfigContext& context);

// Reads one item of a stream's `models`. `stream` holds the stream's settings read so far
// (max_record_bytes bounds a field's bits).
std::optional<ModelConfig> ReadModel(const ConfigEntry& entry, const StreamConfig& stream,
                                     const ConfigContext& context);

}  // namespace codedrift
