// The `streams` items: listener, framing and its limits, allow list, models.
#include <array>
#include <map>

#include "codedrift/daemon_config.h"

#include "daemon_config_text.h"
#include "daemon_config_walk.h"

namespace codedrift {
namespace {

constexpr std::array<std::string_view, 10> kStreamKeys = {"name",
                                                          "listen",
                                                          "framing",
                                                          "max_record_bytes",
                                                          "overlong",
                                                          "max_connections",
                                                          "idle_timeout",
                                                          "allow",
                                                          "receive_buffer_bytes",
                                                          "models"};
constexpr std::array<std::string_view, 4> kFramings = {"lines", "u16be", "u32be", "datagram"};
constexpr std::array<std::string_view, 3> kStreamFramings = {"lines", "u16be", "u32be"};
constexpr std::array<std::string_view, 2> kOverlong = {"truncate", "drop"};

bool IsDatagramScheme(ListenScheme scheme) { return scheme == ListenScheme::kUdp; }

// Reports keys that do not apply to the stream's scheme or framing; returns false if any.
bool CheckApplicableKeys(const ConfigMap& map, const StreamConfig& stream,
                         ConfigDiagnostics& diagnostics) {
  const std::string scheme(ListenSchemeName(stream.listen.scheme));
  bool ok = true;
  const auto refuse = [&](std::string_view key, std::string_view why) {
    if (const ConfigEntry* entry = map.Find(key)) {
      diagnostics.Report(entry->key_position, "key '" + std::string(key) + "' " + std::string(why));
      ok = false;
    }
  };
  if (IsDatagramScheme(stream.listen.scheme)) {
    refuse("max_connections", "does not apply to udp streams, expected it only with tcp or unix");
    refuse("idle_timeout", "does not apply to udp streams, expected it only with tcp or unix");
  } else {
    refuse("receive_buffer_bytes",
           "does not apply to " + scheme + " streams, expected it only with udp");
  }
  if (stream.listen.scheme == ListenScheme::kUnix) {
    refuse("allow",
           "does not apply to unix streams (peers have no address; use the socket file's "
           "permissions), expected it only with tcp or udp");
  }
  if (stream.framing == Framing::kU16be || stream.framing == Framing::kU32be) {
    refuse("overlong", "does not apply to " + std::string(FramingName(stream.framing)) +
                           " framing (an oversized frame closes the connection), expected it "
                           "only with lines or datagram framing");
  }
  return ok;
}

std::optional<std::vector<Cidr>> ReadAllow(const ConfigEntry& entry,
                                           ConfigDiagnostics& diagnostics) {
  auto items = ReadList(entry, diagnostics, kMaxAllowRules);
  if (!items) return std::nullopt;
  if (items->empty()) {
    ReportValue(entry,
                "the list is empty, so no peer could connect, expected at least one CIDR "
                "(0.0.0.0/0 and ::/0 admit everyone)",
                diagnostics);
    return std::nullopt;
  }
  std::vector<Cidr> allow;
  bool ok = true;
  for (const ConfigEntry& item : *items) {
    auto text = ReadString(item, diagnostics);
    if (!text) {
      ok = false;
      continue;
    }
    Result<Cidr> cidr = Cidr::Parse(*text);
    if (!cidr.ok()) {
      ReportValue(item, cidr.error().message, diagnostics);
      ok = false;
      continue;
    }
    allow.push_back(cidr.value());
  }
  return ok ? std::optional(allow) : std::nullopt;
}

}  // namespace

std::string_view FramingName(Framing framing) { return kFramings[static_cast<size_t>(framing)]; }

bool StreamConfig::Allows(std::span<const uint8_t> peer_address) const {
  for (const Cidr& rule : allow) {
    if (rule.Contains(peer_address)) return true;
  }
  return false;
}

std::optional<ParsedStream> ReadStream(const ConfigEntry& entry, const ConfigContext& context) {
  ConfigDiagnostics& diagnostics = context.diagnostics;
  auto map = ConfigMap::Open(entry, "stream", kStreamKeys, diagnostics);
  if (!map) return std::nullopt;
  ParsedStream parsed;
  StreamConfig& stream = parsed.config;
  bool ok = true;
  const auto track = [&ok](const auto& value) {
    ok = ok && value.has_value();
    return value;
  };

  if (const ConfigEntry* e = map->Require("name", diagnostics)) {
    parsed.name_position = e->value_position();
    if (auto name = track(ReadName(*e, diagnostics))) stream.name = *name;
  } else {
    ok = false;
  }
  if (const ConfigEntry* e = map->Require("listen", diagnostics)) {
    parsed.listen_position = e->value_position();
    if (auto url = track(ReadString(*e, diagnostics))) {
      Result<ListenAddress> listen = ListenAddress::Parse(*url);
      if (listen.ok()) {
        stream.listen = listen.value();
        parsed.listen_ok = true;
      } else {
        ReportValue(*e, listen.error().message, diagnostics);
        ok = false;
      }
    }
  } else {
    ok = false;
  }

  // Framing depends on the scheme: without a usable listener, defaults and checks are moot.
  bool framing_ok = parsed.listen_ok;
  stream.framing = IsDatagramScheme(stream.listen.scheme) ? Framing::kDatagram : Framing::kLines;
  if (const ConfigEntry* e = map->Find("framing")) {
    auto framing = track(ReadChoice(*e, kFramings, diagnostics));
    framing_ok = framing_ok && framing.has_value();
    if (framing) stream.framing = static_cast<Framing>(*framing);
    if (framing && parsed.listen_ok &&
        (stream.framing == Framing::kDatagram) != IsDatagramScheme(stream.listen.scheme)) {
      const bool udp = IsDatagramScheme(stream.listen.scheme);
      ReportValue(*e,
                  "'" + std::string(FramingName(stream.framing)) + "' framing is not allowed for " +
                      std::string(ListenSchemeName(stream.listen.scheme)) + " streams, expected " +
                      (udp ? std::string("datagram") : JoinChoices(kStreamFramings)),
                  diagnostics);
      ok = framing_ok = false;
    }
  }
  if (framing_ok) ok = CheckApplicableKeys(*map, stream, diagnostics) && ok;

  if (const ConfigEntry* e = map->Find("max_record_bytes")) {
    if (auto value = track(ReadInteger(*e, 1, kMaxRecordBytesLimit, diagnostics))) {
      stream.max_record_bytes = static_cast<uint32_t>(*value);
    }
  }
  if (const ConfigEntry* e = map->Find("overlong")) {
    if (auto value = track(ReadChoice(*e, kOverlong, diagnostics))) {
      stream.overlong = static_cast<OverlongPolicy>(*value);
    }
  }
  if (const ConfigEntry* e = map->Find("max_connections")) {
    if (auto value = track(ReadInteger(*e, 1, 65536, diagnostics))) {
      stream.max_connections = static_cast<uint32_t>(*value);
    }
  }
  if (const ConfigEntry* e = map->Find("idle_timeout")) {
    if (auto value = track(ReadDuration(*e, ConfigDuration(0), diagnostics))) {
      stream.idle_timeout = *value;
    }
  }
  if (const ConfigEntry* e = map->Find("receive_buffer_bytes")) {
    if (auto value = track(ReadInteger(*e, 4096, uint64_t{1} << 30, diagnostics))) {
      stream.receive_buffer_bytes = static_cast<uint32_t>(*value);
    }
  }
  if (const ConfigEntry* e = map->Find("allow")) {
    if (auto allow = track(ReadAllow(*e, diagnostics))) stream.allow = *allow;
  } else if (stream.listen.scheme != ListenScheme::kUnix) {
    stream.allow = {Cidr::LoopbackV4(), Cidr::LoopbackV6()};
  }

  if (const ConfigEntry* e = map->Require("models", diagnostics)) {
    auto items = track(ReadList(*e, diagnostics, kMaxModelsPerStream));
    if (items && items->empty()) {
      ReportValue(*e, "the list is empty, expected at least one model", diagnostics);
      ok = false;
    }
    std::map<std::string, SourcePosition> seen;
    for (const ConfigEntry& item : items.value_or(std::vector<ConfigEntry>{})) {
      std::optional<ModelConfig> model = ReadModel(item, stream, context);
      if (!model) {
        ok = false;
        continue;
      }
      const SourcePosition name_position = PositionOf(item.value["name"]);
      const auto [it, fresh] = seen.emplace(model->name, name_position);
      if (!fresh) {
        diagnostics.Report(name_position, "duplicate model name '" + model->name + "' in stream '" +
                                              stream.name +
                                              "', expected unique names (first at line " +
                                              std::to_string(it->second.line) + ")");
        ok = false;
        continue;
      }
      stream.models.push_back(std::move(*model));
    }
  } else {
    ok = false;
  }
  return ok ? std::optional(parsed) : std::nullopt;
}

}  // namespace codedrift
