// The checkpoint payload (format version 1): one model's state, field by field, in a fixed
// order. Counts and ids are LEB128 varints, steady times zigzag varints, doubles IEEE 754
// little-endian, strings and keys length-prefixed.
//
//   identity, written (unix ns, steady ns)
//   model:     symbolizer (keys, carry, carry bytes, skipped records), window (kind, contents),
//              cumulative counts, symbols total, records total
//   evaluator: evaluated flag, last_at, last records, last symbols, unknown total,
//              last cumulative counts
//   code state: state, entered_at, condition_since?, last_alert?, alerts; state_since_unix;
//              latest proposal path
//   history:   evicted, coarse points, fine points
#include <string>

#include "codedrift/checkpoint.h"

#include "checkpoint_bytes.h"

namespace codedrift {
namespace {

// Bits of HistoryPoint's optional fields in its presence byte.
constexpr uint8_t kHasDeployed = 1;
constexpr uint8_t kHasRetrained = 2;
constexpr uint8_t kHasSaving = 4;
constexpr uint8_t kHasSavingLower = 8;

void PutCounts(ByteWriter& out, const std::vector<uint64_t>& counts) {
  out.Varint(counts.size());
  for (uint64_t c : counts) out.Varint(c);
}

std::vector<uint64_t> GetCounts(ByteReader& in) {
  std::vector<uint64_t> counts(in.Count());
  for (auto& c : counts) c = in.Varint();
  return counts;
}

void PutOptionalTime(ByteWriter& out, const std::optional<std::chrono::nanoseconds>& time) {
  out.Byte(time ? 1 : 0);
  if (time) out.Signed(time->count());
}

std::optional<std::chrono::nanoseconds> GetOptionalTime(ByteReader& in) {
  const uint8_t present = in.Byte();
  if (present > 1) in.Fail();
  if (present != 1) return std::nullopt;
  return std::chrono::nanoseconds(in.Signed());
}

void PutWindow(ByteWriter& out, const WindowState& window) {
  out.Byte(static_cast<uint8_t>(window.kind));
  switch (window.kind) {
    case WindowStateKind::kNone:
      break;
    case WindowStateKind::kByteRing:
      out.Bytes(std::string_view(reinterpret_cast<const char*>(window.bytes.data()),
                                 window.bytes.size()));
      break;
    case WindowStateKind::kIdRing:
      out.Varint(window.ids.size());
      for (SymbolId id : window.ids) out.Varint(id);
      break;
    case WindowStateKind::kBuckets:
      out.Signed(window.newest_bucket_start.count());
      out.Varint(window.buckets.size());
      for (const auto& bucket : window.buckets) PutCounts(out, bucket);
      break;
  }
}

WindowState GetWindow(ByteReader& in) {
  WindowState window;
  const uint8_t kind = in.Byte();
  if (kind > static_cast<uint8_t>(WindowStateKind::kBuckets)) {
    in.Fail();
    return window;
  }
  window.kind = static_cast<WindowStateKind>(kind);
  switch (window.kind) {
    case WindowStateKind::kNone:
      break;
    case WindowStateKind::kByteRing: {
      const std::string_view bytes = in.Bytes();
      window.bytes.assign(bytes.begin(), bytes.end());
      break;
    }
    case WindowStateKind::kIdRing: {
      window.ids.resize(in.Count());
      for (auto& id : window.ids) {
        const uint64_t value = in.Varint();
        if (value > UINT32_MAX) in.Fail();
        id = static_cast<SymbolId>(value);
      }
      break;
    }
    case WindowStateKind::kBuckets: {
      window.newest_bucket_start = std::chrono::nanoseconds(in.Signed());
      window.buckets.resize(in.Count());
      for (auto& bucket : window.buckets) bucket = GetCounts(in);
      break;
    }
  }
  return window;
}

void PutModel(ByteWriter& out, const ModelState& model) {
  out.Varint(model.symbolizer.keys.size());
  for (const SymbolKey& key : model.symbolizer.keys) out.Bytes(key);
  out.Varint(model.symbolizer.carry);
  out.Varint(model.symbolizer.carry_bytes);
  out.Varint(model.symbolizer.skipped_records);
  PutWindow(out, model.window);
  PutCounts(out, model.cumulative);
  out.Varint(model.symbols_total);
  out.Varint(model.records_total);
}

ModelState GetModel(ByteReader& in) {
  ModelState model;
  model.symbolizer.keys.resize(in.Count());
  for (auto& key : model.symbolizer.keys) key = SymbolKey(in.Bytes());
  model.symbolizer.carry = in.Varint();
  const uint64_t carry_bytes = in.Varint();
  if (carry_bytes > UINT32_MAX) in.Fail();
  model.symbolizer.carry_bytes = static_cast<uint32_t>(carry_bytes);
  model.symbolizer.skipped_records = in.Varint();
  model.window = GetWindow(in);
  model.cumulative = GetCounts(in);
  model.symbols_total = in.Varint();
  model.records_total = in.Varint();
  return model;
}

void PutPoint(ByteWriter& out, const HistoryPoint& p) {
  out.Double(p.unix_seconds);
  out.Double(p.entropy_bits);
  const uint8_t present =
      (p.deployed_mean_bits ? kHasDeployed : 0) | (p.retrained_mean_bits ? kHasRetrained : 0) |
      (p.saving_ratio ? kHasSaving : 0) | (p.saving_lower_ratio ? kHasSavingLower : 0);
  out.Byte(present);
  for (const auto* value :
       {&p.deployed_mean_bits, &p.retrained_mean_bits, &p.saving_ratio, &p.saving_lower_ratio}) {
    if (*value) out.Double(**value);
  }
  out.Signed(p.state);
}

HistoryPoint GetPoint(ByteReader& in) {
  HistoryPoint p;
  p.unix_seconds = in.Double();
  p.entropy_bits = in.Double();
  const uint8_t present = in.Byte();
  if (present > (kHasDeployed | kHasRetrained | kHasSaving | kHasSavingLower)) in.Fail();
  const std::pair<uint8_t, std::optional<double>*> fields[] = {
      {kHasDeployed, &p.deployed_mean_bits},
      {kHasRetrained, &p.retrained_mean_bits},
      {kHasSaving, &p.saving_ratio},
      {kHasSavingLower, &p.saving_lower_ratio}};
  for (const auto& [bit, value] : fields) {
    if (present & bit) *value = in.Double();
  }
  const int64_t state = in.Signed();
  if (state < 0 || state > static_cast<int64_t>(CodeState::kStale)) in.Fail();
  p.state = static_cast<int>(state);
  return p;
}

void PutPoints(ByteWriter& out, const std::vector<HistoryPoint>& points) {
  out.Varint(points.size());
  for (const auto& p : points) PutPoint(out, p);
}

std::vector<HistoryPoint> GetPoints(ByteReader& in) {
  constexpr size_t kMinPointBytes = 8 + 8 + 1 + 1;
  std::vector<HistoryPoint> points(in.Count(kMinPointBytes));
  for (auto& p : points) p = GetPoint(in);
  return points;
}

}  // namespace

std::string EncodeModelCheckpoint(const ModelCheckpoint& c) {
  std::string payload;
  ByteWriter out(payload);
  out.Bytes(c.identity);
  out.Signed(c.written.unix_ns);
  out.Signed(c.written.steady_ns);
  PutModel(out, c.model);

  out.Byte(c.evaluator.evaluated ? 1 : 0);
  out.Signed(c.evaluator.last_at.count());
  out.Varint(c.evaluator.last_records);
  out.Varint(c.evaluator.last_symbols);
  out.Varint(c.evaluator.unknown_total);
  PutCounts(out, c.evaluator.last_cumulative);

  out.Byte(static_cast<uint8_t>(c.code_state.state));
  out.Signed(c.code_state.entered_at.count());
  PutOptionalTime(out, c.code_state.condition_since);
  PutOptionalTime(out, c.code_state.last_alert);
  out.Varint(c.code_state.alerts);
  out.Double(c.state_since_unix);
  out.Bytes(c.latest_proposal);

  out.Varint(c.history.evicted);
  PutPoints(out, c.history.coarse);
  PutPoints(out, c.history.fine);
  return payload;
}

CheckpointResult<ModelCheckpoint> DecodeModelCheckpoint(std::string_view payload) {
  ByteReader in(payload);
  ModelCheckpoint c;
  c.identity = std::string(in.Bytes());
  c.written.unix_ns = in.Signed();
  c.written.steady_ns = in.Signed();
  c.model = GetModel(in);

  const uint8_t evaluated = in.Byte();
  if (evaluated > 1) in.Fail();
  c.evaluator.evaluated = evaluated == 1;
  c.evaluator.last_at = std::chrono::nanoseconds(in.Signed());
  c.evaluator.last_records = in.Varint();
  c.evaluator.last_symbols = in.Varint();
  c.evaluator.unknown_total = in.Varint();
  c.evaluator.last_cumulative = GetCounts(in);

  const uint8_t state = in.Byte();
  if (state > static_cast<uint8_t>(CodeState::kStale)) in.Fail();
  c.code_state.state = static_cast<CodeState>(state);
  c.code_state.entered_at = std::chrono::nanoseconds(in.Signed());
  c.code_state.condition_since = GetOptionalTime(in);
  c.code_state.last_alert = GetOptionalTime(in);
  c.code_state.alerts = in.Varint();
  c.state_since_unix = in.Double();
  c.latest_proposal = std::string(in.Bytes());

  c.history.evicted = in.Varint();
  c.history.coarse = GetPoints(in);
  c.history.fine = GetPoints(in);
  if (!in.ok()) {
    return CheckpointError{CheckpointProblem::kMalformed, "payload does not parse"};
  }
  if (!in.done()) {
    return CheckpointError{CheckpointProblem::kMalformed,
                           std::to_string(in.left()) + " unexpected bytes after the payload"};
  }
  return c;
}

}  // namespace codedrift
