// The daemon config's top level: YAML loading, http, alerts, checks across streams.
#include "codedrift/daemon_config.h"

#include <array>
#include <fstream>
#include <map>
#include <sstream>

#include "daemon_config_text.h"
#include "daemon_config_walk.h"

namespace codedrift {
namespace {

constexpr std::array<std::string_view, 6> kTopKeys = {
    "http", "state_dir", "evaluate_every", "checkpoint_every", "streams", "alerts"};
constexpr std::array<std::string_view, 2> kHttpKeys = {"listen", "admin_token_file"};
constexpr std::array<std::string_view, 2> kAlertsKeys = {"log", "webhook"};
constexpr std::array<std::string_view, 3> kWebhookKeys = {"url", "timeout", "retries"};
constexpr size_t kMaxConfigFileBytes = 16u << 20;

bool ReadHttp(const ConfigEntry& entry, const ConfigContext& context, HttpConfig& http) {
  auto map = ConfigMap::Open(entry, "http", kHttpKeys, context.diagnostics);
  if (!map) return false;
  bool ok = true;
  if (const ConfigEntry* e = map->Find("listen")) {
    if (auto text = ReadString(*e, context.diagnostics)) {
      Result<HostPort> address = HostPort::Parse(*text);
      if (address.ok()) {
        http.host = address.value().host;
        http.port = address.value().port;
      } else {
        ReportValue(*e, address.error().message, context.diagnostics);
        ok = false;
      }
    } else {
      ok = false;
    }
  }
  if (const ConfigEntry* e = map->Find("admin_token_file")) {
    auto path = ReadPath(*e, context.diagnostics);
    if (path) http.admin_token_file = context.ResolvePath(*path);
    ok = ok && path.has_value();
  }
  return ok;
}

std::optional<WebhookConfig> ReadWebhook(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  auto map = ConfigMap::Open(entry, "webhook", kWebhookKeys, diagnostics);
  if (!map) return std::nullopt;
  WebhookConfig webhook;
  bool ok = true;
  if (const ConfigEntry* e = map->Require("url", diagnostics)) {
    if (auto url = ReadString(*e, diagnostics)) {
      Result<HttpUrl> target = HttpUrl::Parse(*url);
      if (target.ok()) {
        webhook.url = *url;
        webhook.target = target.value();
      } else {
        ReportValue(*e, target.error().message, diagnostics);
        ok = false;
      }
    } else {
      ok = false;
    }
  } else {
    ok = false;
  }
  if (const ConfigEntry* e = map->Find("timeout")) {
    auto timeout = ReadDuration(*e, std::chrono::milliseconds(100), diagnostics);
    if (timeout) webhook.timeout = *timeout;
    ok = ok && timeout.has_value();
  }
  if (const ConfigEntry* e = map->Find("retries")) {
    auto retries = ReadInteger(*e, 0, 100, diagnostics);
    if (retries) webhook.retries = static_cast<uint32_t>(*retries);
    ok = ok && retries.has_value();
  }
  return ok ? std::optional(webhook) : std::nullopt;
}

bool ReadAlerts(const ConfigEntry& entry, ConfigDiagnostics& diagnostics, AlertsConfig& alerts) {
  auto map = ConfigMap::Open(entry, "alerts", kAlertsKeys, diagnostics);
  if (!map) return false;
  bool ok = true;
  if (const ConfigEntry* e = map->Find("log")) {
    auto log = ReadBool(*e, diagnostics);
    if (log) alerts.log = *log;
    ok = ok && log.has_value();
  }
  if (const ConfigEntry* e = map->Find("webhook")) {
    alerts.webhook = ReadWebhook(*e, diagnostics);
    ok = ok && alerts.webhook.has_value();
  }
  return ok;
}

// Two listeners on one address cannot both bind; say so here rather than at startup.
void CheckListenConflicts(const std::vector<ParsedStream>& streams, const HttpConfig& http,
                          ConfigDiagnostics& diagnostics) {
  std::map<std::string, std::string> owners;  // URL -> stream name (or "http")
  owners["tcp://" + HostPort{http.host, http.port}.ToString()] = "the HTTP server";
  for (const ParsedStream& stream : streams) {
    const ListenAddress& listen = stream.config.listen;
    if (!stream.listen_ok || (listen.scheme != ListenScheme::kUnix && listen.port == 0)) continue;
    const std::string url = listen.ToString();
    const auto [it, fresh] = owners.emplace(url, "stream '" + stream.config.name + "'");
    if (!fresh) {
      diagnostics.Report(stream.listen_position, "listen: " + url + " is already used by " +
                                                     it->second +
                                                     ", expected a different address or port");
    }
  }
}

std::optional<DaemonConfig> ReadRoot(const YAML::Node& document, const ConfigContext& context,
                                     std::string_view file_name) {
  ConfigDiagnostics& diagnostics = context.diagnostics;
  if (!document.IsDefined() || document.IsNull()) {
    diagnostics.Report({}, "the config is empty, expected a mapping with at least 'streams'");
    return std::nullopt;
  }
  auto map = ConfigMap::Open(RootEntry(document), "config", kTopKeys, diagnostics);
  if (!map) return std::nullopt;
  DaemonConfig config;
  config.file_name = std::string(file_name);
  bool ok = true;
  if (const ConfigEntry* e = map->Find("http")) ok = ReadHttp(*e, context, config.http) && ok;
  if (const ConfigEntry* e = map->Find("state_dir")) {
    auto path = ReadPath(*e, diagnostics);
    if (path) config.state_dir = context.ResolvePath(*path);
    ok = ok && path.has_value();
  }
  if (const ConfigEntry* e = map->Find("evaluate_every")) {
    auto every = ReadDuration(*e, std::chrono::milliseconds(100), diagnostics);
    if (every) config.evaluate_every = *every;
    ok = ok && every.has_value();
  }
  if (const ConfigEntry* e = map->Find("checkpoint_every")) {
    auto every = ReadDuration(*e, std::chrono::seconds(1), diagnostics);
    if (every) config.checkpoint_every = *every;
    ok = ok && every.has_value();
  }
  if (const ConfigEntry* e = map->Require("streams", diagnostics)) {
    auto items = ReadList(*e, diagnostics, kMaxStreams);
    if (items && items->empty()) {
      ReportValue(*e, "the list is empty, expected at least one stream", diagnostics);
      ok = false;
    }
    std::vector<ParsedStream> parsed;
    std::map<std::string, SourcePosition> seen;
    for (const ConfigEntry& item : items.value_or(std::vector<ConfigEntry>{})) {
      std::optional<ParsedStream> stream = ReadStream(item, context);
      if (!stream) {
        ok = false;
        continue;
      }
      const auto [it, fresh] = seen.emplace(stream->config.name, stream->name_position);
      if (!fresh) {
        diagnostics.Report(stream->name_position, "duplicate stream name '" + stream->config.name +
                                                      "', expected unique names (first at line " +
                                                      std::to_string(it->second.line) + ")");
        ok = false;
        continue;
      }
      parsed.push_back(std::move(*stream));
    }
    CheckListenConflicts(parsed, config.http, diagnostics);
    for (ParsedStream& stream : parsed) config.streams.push_back(std::move(stream.config));
    ok = ok && items.has_value();
  } else {
    ok = false;
  }
  if (const ConfigEntry* e = map->Find("alerts"))
    ok = ReadAlerts(*e, diagnostics, config.alerts) && ok;
  if (!ok || diagnostics.has_errors()) return std::nullopt;
  return config;
}

Result<DaemonConfig> ParseWithBase(std::string_view text, std::string_view file_name,
                                   std::filesystem::path base_dir) {
  ConfigDiagnostics diagnostics{std::string(file_name)};
  const ConfigContext context{diagnostics, std::move(base_dir)};
  std::optional<YAML::Node> document = LoadSingleYamlDocument(text, diagnostics);
  if (!document) return Error{diagnostics.Joined()};
  std::optional<DaemonConfig> config;
  try {
    config = ReadRoot(*document, context, file_name);
  } catch (const std::exception& error) {
    // yaml-cpp accessors throw only on misuse; keep any such slip from crossing the API.
    diagnostics.Report({}, std::string("internal error reading the config: ") + error.what());
  }
  if (!config || diagnostics.has_errors()) return Error{diagnostics.Joined()};
  return std::move(*config);
}

}  // namespace

std::string ConfigContext::ResolvePath(const std::string& path) const {
  const std::filesystem::path given(path);
  if (given.is_absolute() || base_dir.empty()) return given.lexically_normal().string();
  return (base_dir / given).lexically_normal().string();
}

Result<DaemonConfig> ParseDaemonConfig(std::string_view text, std::string_view file_name) {
  return ParseWithBase(text, file_name, std::filesystem::path(file_name).parent_path());
}

Result<DaemonConfig> LoadDaemonConfig(const std::string& path) {
  std::error_code error;
  if (std::filesystem::is_directory(path, error)) {
    return Error{path + ": is a directory, expected a YAML config file"};
  }
  std::ifstream file(path, std::ios::binary);
  if (!file) return Error{path + ": cannot open the config file, expected a readable YAML file"};
  std::ostringstream text;
  text << file.rdbuf();
  if (!file.good() && !file.eof()) return Error{path + ": cannot read the config file"};
  if (text.str().size() > kMaxConfigFileBytes) {
    return Error{path + ": the config file is larger than 16 MiB, expected a small YAML file"};
  }
  std::filesystem::path base = std::filesystem::absolute(path, error).parent_path();
  if (error) base = std::filesystem::path(path).parent_path();
  return ParseWithBase(text.str(), path, base);
}

}  // namespace codedrift
