// The `models` items of a stream: symbols, window, table, alert rule, orders.
#include <algorithm>
#include <array>
#include <map>

#include "codedrift/daemon_config.h"

#include "daemon_config_text.h"
#include "daemon_config_walk.h"

namespace codedrift {
namespace {

constexpr std::array<std::string_view, 7> kModelKeys = {"name",  "symbols",       "window", "table",
                                                        "alert", "export_counts", "orders"};
constexpr std::array<std::string_view, 9> kSymbolsKeys = {
    "kind",        "block",      "delimiters", "mask_digits", "max_distinct",
    "offset_bits", "width_bits", "order",      "transform"};
constexpr std::array<std::string_view, 3> kKinds = {"bytes", "tokens", "field"};
constexpr std::array<std::string_view, 2> kBytesKeys = {"block", "max_distinct"};
constexpr std::array<std::string_view, 3> kTokensKeys = {"delimiters", "mask_digits",
                                                         "max_distinct"};
constexpr std::array<std::string_view, 5> kFieldKeys = {"offset_bits", "width_bits", "order",
                                                        "transform", "max_distinct"};
constexpr std::array<std::string_view, 2> kOrders = {"big", "little"};
constexpr std::array<std::string_view, 3> kTransforms = {"none", "delta", "xor"};
constexpr std::array<std::string_view, 3> kWindowKeys = {"symbols", "span", "buckets"};
constexpr std::array<std::string_view, 6> kAlertKeys = {"saving",     "for",      "min_symbols",
                                                        "confidence", "cooldown", "max_payback"};

constexpr uint64_t kMaxWindowSymbols = uint64_t{1} << 28;
// max_distinct (tokens, byte blocks of 3..4, fields wider than 16 bits).
constexpr uint64_t kMaxDistinctLimit = uint64_t{1} << 24;
constexpr uint64_t kMaxBuckets = 4096;
constexpr uint64_t kDefaultBuckets = 60;
// Per-symbol count export is for small alphabets: each symbol is one Prometheus series.
constexpr uint64_t kMaxExportedSymbols = 4096;

template <class T, class U>
void Assign(const std::optional<U>& value, T& out) {
  if (value) out = static_cast<T>(*value);
}

std::span<const std::string_view> KeysOfKind(AlphabetKind kind) {
  switch (kind) {
    case AlphabetKind::kBytes:
      return kBytesKeys;
    case AlphabetKind::kTokens:
      return kTokensKeys;
    case AlphabetKind::kField:
      return kFieldKeys;
  }
  return {};
}

// max_distinct bounds the alphabets that number values as they come (tokens, blocks of 3..4
// bytes, fields wider than 16 bits). Smaller blocks and fields have an id for every value, so
// the key would change nothing there: it is an error rather than silently ignored.
bool CheckMaxDistinctApplies(const ConfigMap& map, const SymbolsConfig& symbols,
                             ConfigDiagnostics& diagnostics) {
  const ConfigEntry* entry = map.Find("max_distinct");
  if (entry == nullptr || symbols.alphabet().HasOverflowSymbol()) return true;
  const std::string values =
      symbols.kind == AlphabetKind::kBytes
          ? "blocks of " + std::to_string(symbols.block) + " byte" + (symbols.block == 1 ? "" : "s")
          : std::to_string(symbols.field.width_bits) + "-bit fields";
  diagnostics.Report(entry->key_position,
                     "key 'max_distinct' does not apply to " + values + " (every one of their " +
                         std::to_string(symbols.alphabet().Size()) +
                         " values has an id of its own), expected it only with block 3 or 4 "
                         "(bytes) or width_bits 17 to 32 (field)");
  return false;
}

std::optional<SymbolsConfig> ReadSymbols(const ConfigEntry& entry, const StreamConfig& stream,
                                         ConfigDiagnostics& diagnostics) {
  // All kinds' keys are accepted here; keys of another kind are reported below, by name.
  auto map = ConfigMap::Open(entry, "symbols", kSymbolsKeys, diagnostics);
  if (!map) return std::nullopt;
  const ConfigEntry* kind_entry = map->Require("kind", diagnostics);
  if (kind_entry == nullptr) return std::nullopt;
  const std::optional<size_t> kind_index = ReadChoice(*kind_entry, kKinds, diagnostics);
  if (!kind_index) return std::nullopt;
  SymbolsConfig symbols;
  symbols.kind = static_cast<AlphabetKind>(*kind_index);
  const std::span<const std::string_view> own_keys = KeysOfKind(symbols.kind);
  bool ok = true;
  for (const ConfigEntry& key : map->entries()) {
    if (key.key == "kind" ||
        std::find(own_keys.begin(), own_keys.end(), key.key) != own_keys.end()) {
      continue;
    }
    diagnostics.Report(key.key_position, "key '" + key.key +
                                             "' does not apply to symbols of kind " +
                                             std::string(kKinds[*kind_index]) + ", expected " +
                                             JoinChoices(own_keys));
    ok = false;
  }
  const auto read = [&](std::string_view key, auto reader) {
    const ConfigEntry* found = map->Find(key);
    if (found == nullptr) return;
    if (!reader(*found)) ok = false;
  };
  read("block", [&](const ConfigEntry& e) {
    auto value = ReadInteger(e, 1, 4, diagnostics);
    Assign(value, symbols.block);
    return value.has_value();
  });
  read("delimiters", [&](const ConfigEntry& e) {
    auto value = ReadString(e, diagnostics);
    if (value && value->empty()) {
      ReportValue(e, "the delimiter set is empty, expected at least one character", diagnostics);
      return false;
    }
    Assign(value, symbols.tokens.delimiters);
    return value.has_value();
  });
  read("mask_digits", [&](const ConfigEntry& e) {
    auto value = ReadBool(e, diagnostics);
    Assign(value, symbols.tokens.mask_digits);
    return value.has_value();
  });
  read("max_distinct", [&](const ConfigEntry& e) {
    auto value = ReadInteger(e, 1, kMaxDistinctLimit, diagnostics);
    switch (symbols.kind) {
      case AlphabetKind::kBytes:
        Assign(value, symbols.bytes.max_distinct);
        break;
      case AlphabetKind::kTokens:
        Assign(value, symbols.tokens.max_distinct);
        break;
      case AlphabetKind::kField:
        Assign(value, symbols.field.max_distinct);
        break;
    }
    return value.has_value();
  });
  read("offset_bits", [&](const ConfigEntry& e) {
    auto value = ReadInteger(e, 0, uint64_t{8} * kMaxRecordBytesLimit, diagnostics);
    Assign(value, symbols.field.offset_bits);
    return value.has_value();
  });
  read("width_bits", [&](const ConfigEntry& e) {
    auto value = ReadInteger(e, 1, 32, diagnostics);
    Assign(value, symbols.field.width_bits);
    return value.has_value();
  });
  read("order", [&](const ConfigEntry& e) {
    auto value = ReadChoice(e, kOrders, diagnostics);
    if (value) symbols.field.order = static_cast<FieldOrder>(*value);
    return value.has_value();
  });
  read("transform", [&](const ConfigEntry& e) {
    auto value = ReadChoice(e, kTransforms, diagnostics);
    if (value) symbols.field.transform = static_cast<FieldTransform>(*value);
    return value.has_value();
  });
  if (ok) ok = CheckMaxDistinctApplies(*map, symbols, diagnostics);
  if (ok && symbols.kind == AlphabetKind::kField) {
    const uint64_t end_bit =
        uint64_t{symbols.field.offset_bits} + static_cast<uint64_t>(symbols.field.width_bits);
    const uint64_t record_bits = uint64_t{8} * stream.max_record_bytes;
    if (end_bit > record_bits) {
      diagnostics.Report(
          map->position(),
          "symbols: the field ends at bit " + std::to_string(end_bit) +
              ", beyond the stream's max_record_bytes " + std::to_string(stream.max_record_bytes) +
              ", expected offset_bits + width_bits <= " + std::to_string(record_bits));
      ok = false;
    }
  }
  return ok ? std::optional(symbols) : std::nullopt;
}

std::optional<WindowConfig> ReadWindow(const ConfigEntry& entry, ConfigDiagnostics& diagnostics) {
  auto map = ConfigMap::Open(entry, "window", kWindowKeys, diagnostics);
  if (!map) return std::nullopt;
  const ConfigEntry* symbols = map->Find("symbols");
  const ConfigEntry* span = map->Find("span");
  if ((symbols == nullptr) == (span == nullptr)) {
    diagnostics.Report(map->position(),
                       symbols == nullptr
                           ? "window: missing 'symbols' or 'span', expected one of them"
                           : "window: both 'symbols' and 'span' given, expected one of them");
    return std::nullopt;
  }
  WindowConfig window;
  bool ok = true;
  if (symbols != nullptr) {
    window.kind = WindowKind::kSymbols;
    auto value = ReadInteger(*symbols, 2, kMaxWindowSymbols, diagnostics);
    Assign(value, window.symbols);
    ok = value.has_value();
  } else {
    window.kind = WindowKind::kSpan;
    auto value = ReadDuration(*span, std::chrono::seconds(1), diagnostics);
    Assign(value, window.span);
    ok = value.has_value();
  }
  if (const ConfigEntry* buckets = map->Find("buckets")) {
    auto value = ReadInteger(*buckets, 2, kMaxBuckets, diagnostics);
    if (value && ok && window.kind == WindowKind::kSymbols && *value > window.symbols) {
      ReportValue(*buckets,
                  std::to_string(*value) + " is more than the window's " +
                      std::to_string(window.symbols) + " symbols, expected at most " +
                      std::to_string(window.symbols),
                  diagnostics);
      return std::nullopt;
    }
    Assign(value, window.buckets);
    ok = ok && value.has_value();
  } else if (window.kind == WindowKind::kSymbols) {
    window.buckets = static_cast<uint32_t>(std::min(kDefaultBuckets, window.symbols));
  }
  return ok ? std::optional(window) : std::nullopt;
}

// `window_symbols` is 0 for time windows (no fixed size to compare min_symbols with).
std::optional<AlertRule> ReadAlert(const ConfigEntry& entry, uint64_t window_symbols,
                                   ConfigDiagnostics& diagnostics) {
  auto map = ConfigMap::Open(entry, "alert", kAlertKeys, diagnostics);
  if (!map) return std::nullopt;
  AlertRule alert;
  bool ok = true;
  const auto track = [&ok](const auto& value) {
    ok = ok && value.has_value();
    return value;
  };
  if (const ConfigEntry* e = map->Find("saving"))
    Assign(track(ReadOpenRatio(*e, diagnostics)), alert.saving);
  if (const ConfigEntry* e = map->Find("for")) {
    Assign(track(ReadDuration(*e, ConfigDuration(0), diagnostics)), alert.for_duration);
  }
  if (const ConfigEntry* e = map->Find("min_symbols")) {
    auto value = track(ReadInteger(*e, 0, kMaxWindowSymbols, diagnostics));
    if (value && window_symbols > 0 && *value > window_symbols) {
      ReportValue(*e,
                  std::to_string(*value) + " is more than the window's " +
                      std::to_string(window_symbols) +
                      " symbols, so the alert could never fire, expected at most " +
                      std::to_string(window_symbols),
                  diagnostics);
      return std::nullopt;
    }
    Assign(value, alert.min_symbols);
  } else if (window_symbols > 0) {
    alert.min_symbols = std::min(alert.min_symbols, window_symbols);
  }
  if (const ConfigEntry* e = map->Find("confidence")) {
    Assign(track(ReadOpenRatio(*e, diagnostics)), alert.confidence);
  }
  if (const ConfigEntry* e = map->Find("cooldown")) {
    Assign(track(ReadDuration(*e, ConfigDuration(0), diagnostics)), alert.cooldown);
  }
  if (const ConfigEntry* e = map->Find("max_payback")) {
    Assign(track(ReadDuration(*e, std::chrono::seconds(1), diagnostics)), alert.max_payback);
  }
  return ok ? std::optional(alert) : std::nullopt;
}

std::optional<std::vector<int>> ReadOrders(const ConfigEntry& entry,
                                           ConfigDiagnostics& diagnostics) {
  auto items = ReadList(entry, diagnostics, kMaxBlockOrder);
  if (!items) return std::nullopt;
  if (items->empty()) {
    ReportValue(entry, "the list is empty, expected at least one order, e.g. [1]", diagnostics);
    return std::nullopt;
  }
  std::vector<int> orders;
  bool ok = true;
  for (const ConfigEntry& item : *items) {
    auto order = ReadInteger(item, 1, kMaxBlockOrder, diagnostics);
    if (!order) {
      ok = false;
    } else if (std::find(orders.begin(), orders.end(), static_cast<int>(*order)) != orders.end()) {
      ReportValue(item, "order " + std::to_string(*order) + " is listed twice, expected each once",
                  diagnostics);
      ok = false;
    } else {
      orders.push_back(static_cast<int>(*order));
    }
  }
  std::sort(orders.begin(), orders.end());
  return ok ? std::optional(orders) : std::nullopt;
}

uint64_t AlphabetLimit(const SymbolsConfig& symbols) {
  switch (symbols.kind) {
    case AlphabetKind::kBytes:
      return uint64_t{1} << (8 * symbols.block);
    case AlphabetKind::kTokens:
      return symbols.tokens.max_distinct;
    case AlphabetKind::kField:
      return uint64_t{1} << symbols.field.width_bits;
  }
  return 0;
}

}  // namespace

std::optional<ModelConfig> ReadModel(const ConfigEntry& entry, const StreamConfig& stream,
                                     const ConfigContext& context) {
  ConfigDiagnostics& diagnostics = context.diagnostics;
  auto map = ConfigMap::Open(entry, "model", kModelKeys, diagnostics);
  if (!map) return std::nullopt;
  ModelConfig model;
  bool ok = true;
  if (const ConfigEntry* e = map->Require("name", diagnostics)) {
    auto name = ReadName(*e, diagnostics);
    Assign(name, model.name);
    ok = ok && name.has_value();
  } else {
    ok = false;
  }
  bool symbols_ok = false;
  if (const ConfigEntry* e = map->Require("symbols", diagnostics)) {
    auto symbols = ReadSymbols(*e, stream, diagnostics);
    Assign(symbols, model.symbols);
    symbols_ok = symbols.has_value();
  }
  ok = ok && symbols_ok;
  bool window_ok = true;
  if (const ConfigEntry* e = map->Find("window")) {
    auto window = ReadWindow(*e, diagnostics);
    Assign(window, model.window);
    window_ok = window.has_value();
    ok = ok && window_ok;
  }
  if (const ConfigEntry* e = map->Find("table")) {
    auto path = ReadPath(*e, diagnostics);
    if (path) model.table = context.ResolvePath(*path);
    ok = ok && path.has_value();
  }
  if (const ConfigEntry* e = map->Find("alert")) {
    // A window that failed to read gives no size to check min_symbols against.
    const uint64_t window_symbols =
        window_ok && model.window.kind == WindowKind::kSymbols ? model.window.symbols : 0;
    auto alert = ReadAlert(*e, window_symbols, diagnostics);
    Assign(alert, model.alert);
    ok = ok && alert.has_value();
  } else if (model.window.kind == WindowKind::kSymbols) {
    model.alert.min_symbols = std::min(model.alert.min_symbols, model.window.symbols);
  }
  if (const ConfigEntry* e = map->Find("export_counts")) {
    auto value = ReadBool(*e, diagnostics);
    Assign(value, model.export_counts);
    ok = ok && value.has_value();
    if (value && *value && symbols_ok && AlphabetLimit(model.symbols) > kMaxExportedSymbols) {
      ReportValue(*e,
                  "the " + model.symbols.alphabet().ToString() +
                      " alphabet is too large to export per-symbol counts, expected it only for "
                      "alphabets of at most 4096 symbols (bytes, field up to 12 bits, tokens "
                      "with max_distinct up to 4096)",
                  diagnostics);
      ok = false;
    }
  }
  if (const ConfigEntry* e = map->Find("orders")) {
    auto orders = ReadOrders(*e, diagnostics);
    Assign(orders, model.orders);
    ok = ok && orders.has_value();
  }
  return ok ? std::optional(model) : std::nullopt;
}

Alphabet SymbolsConfig::alphabet() const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return Alphabet::Bytes(block);
    case AlphabetKind::kTokens:
      return Alphabet::Tokens();
    case AlphabetKind::kField:
      return Alphabet::Field(field.width_bits);
  }
  return {};
}

}  // namespace codedrift
