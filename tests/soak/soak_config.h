// What the soak benchmark runs: its streams (tcp lines, tcp u16be frames, a unix socket, udp
// datagrams), their models (bytes, 2-byte blocks, digit-masked tokens, a bit field; count and
// time windows) and the daemon config text that deploys table set A or B on them.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "soak_traffic.h"

namespace codedrift::soak {

enum class StreamKind { kTcp, kUnix, kUdp };

struct SoakModel {
  std::string name;
  std::string symbols;  // the config's `symbols:` flow map
  std::string window;   // the config's `window:` flow map
  std::string table;    // table file stem in the tables directory: <stem>-a/-b.table, or
                        // <stem>.table when `swapped` is false
  bool swapped = true;  // reloads alternate this model between tables A and B
  // codedrift_symbols_total must equal the stream's payload bytes (single-byte models).
  bool counts_payload = false;
  uint64_t min_symbols = 100000;
};

struct SoakStream {
  std::string name;
  StreamKind kind = StreamKind::kTcp;
  WireFraming framing = WireFraming::kLines;  // tcp and unix
  int connections = 1;                        // tcp and unix: flat-out senders
  std::vector<SoakModel> models;
};

// The soak's streams and models.
std::vector<SoakStream> SoakStreams();

struct SoakConfigOptions {
  std::string tables_dir;  // absolute
  std::string token_file;  // absolute
  std::string unix_path;   // absolute path of the unix stream's socket
  uint16_t webhook_port = 0;
  std::string evaluate_every = "2s";
};

// The daemon config with table set `variant` ('a': trained on the old traffic, so the models
// drift; 'b': trained on the current traffic, so they fit) on every swapped model.
std::string SoakConfigText(const SoakConfigOptions& options, char variant);
// The table path a model has under `variant`.
std::string TablePath(const SoakConfigOptions& options, const SoakModel& model, char variant);

}  // namespace codedrift::soak
